/**
 * `npm run instrument:simulate -- --instrument <name or id> --label <container label> [--file <jdx|csv>]
 *  [--clock-offset-minutes <n>] [--pieces <n>]`
 *
 * Writes one new acquisition of a container into the instrument's export folder as the instrument
 * would (fixtures/instrument-simulator.ts): in pieces, then closed; fresh noise every run. Without
 * --file the spectrum is the container material's first approved reference, acquired again.
 * --clock-offset-minutes sets the simulated instrument clock off the real time (the verifier's
 * clock warning). Reads the instrument's intake settings from the database (DRUMLINE_DB_NAME
 * chooses the database, as for the server). docs/instrument-intake.md.
 */
import fs from 'node:fs';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { loadConfig } from '../server/lib/config';
import { closeDb, initDb } from '../server/lib/db';
import type { StoredFileRow } from '../server/lib/db-tables';
import { resolveExportFolder } from '../server/modules/intake';
import { intakeSettingOf } from '../server/lib/intake-records';
import { simulateAcquisition } from '../fixtures/instrument-simulator';

async function main() {
  const { values } = parseArgs({
    options: {
      instrument: { type: 'string' },
      label: { type: 'string' },
      file: { type: 'string' },
      'clock-offset-minutes': { type: 'string' },
      pieces: { type: 'string' },
    },
  });
  if (!values.instrument || !values.label)
    throw new Error(
      'usage: npm run instrument:simulate -- --instrument <name or id> --label <label> [--file <jdx|csv>]',
    );
  const config = loadConfig();
  const db = initDb();
  try {
    const key = values.instrument.trim();
    const all = await db('instrument').select('id', 'name', 'serial_number');
    const exact = all.filter((i) => String(i.id) === key || i.name.toLowerCase() === key.toLowerCase());
    const partial = all.filter((i) => i.name.toLowerCase().includes(key.toLowerCase()));
    const inst = exact.length === 1 ? exact[0] : partial.length === 1 ? partial[0] : null;
    if (!inst)
      throw new Error(
        `instrument "${key}" is ${partial.length > 1 ? 'ambiguous' : 'unknown'}; instruments: ${all.map((i) => `${i.id} ${i.name}`).join('; ')}`,
      );
    const setting = await intakeSettingOf(db, inst.id, config.siteTimeZone);
    if (!setting.exportFolder)
      throw new Error(`instrument ${inst.name} has no export folder (instrument page, intake)`);
    const folder = resolveExportFolder(config, setting.exportFolder);
    const label = values.label.trim().toUpperCase();
    let source: { bytes: Uint8Array; name: string };
    if (values.file) {
      source = { bytes: new Uint8Array(fs.readFileSync(values.file)), name: path.basename(values.file) };
    } else {
      const ref = await db('container as c')
        .join('lot as l', 'l.id', 'c.lot_id')
        .join('reference_spectrum as r', 'r.material_id', 'l.material_id')
        .join('stored_file as f', 'f.id', 'r.file_id')
        .where('c.label', label)
        .where('r.status', 'approved')
        .orderBy('r.id')
        .first<Pick<StoredFileRow, 'data' | 'file_name'> | undefined>('f.data', 'f.file_name');
      if (!ref) throw new Error(`container ${label} is unknown or its material has no approved reference; pass --file`);
      source = { bytes: new Uint8Array(ref.data), name: ref.file_name };
    }
    const offset = Number(values['clock-offset-minutes'] ?? 0);
    const file = await simulateAcquisition({
      folder,
      label,
      source,
      instrument: { name: inst.name, serialNumber: inst.serial_number },
      timeZone: setting.timeZone,
      clock: new Date(Date.now() + offset * 60_000),
      pieces: values.pieces ? Number(values.pieces) : 4,
    });
    process.stdout.write(`wrote ${path.relative(process.cwd(), file)}\n`);
  } finally {
    await closeDb();
  }
}

main().catch((e) => {
  process.stderr.write(`${(e as Error).message}\n`);
  process.exit(1);
});
