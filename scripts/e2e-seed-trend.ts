/**
 * Browser tests only: a synthetic trend history in the e2e database (db/seeds/trend-history.ts)
 * on a material of its own (real nylon 6,6 fibre reference and sample from
 * ../shared/reference-data), one source drifting, and the run rules applied once, so that
 * e2e/trending.spec.ts finds a drift signal to open and acknowledge. Idempotent.
 *   DRUMLINE_E2E_DB=drumline_e2e tsx scripts/e2e-seed-trend.ts
 */
import { FIBRES, dataFile, seedApprovedMaterial, seedInstrument } from '../db/seeds/testing-library';
import { seedTrendHistory } from '../db/seeds/trend-history';
import { closeDb, initDb } from '../server/lib/db';
import { scanTrends } from '../server/modules/trending';

const database = process.env.DRUMLINE_E2E_DB ?? 'drumline_e2e';

export const E2E_TREND = {
  code: 'E2E-NY66-TR',
  name: 'Nylon 6,6 trend fibre',
  instrument: 'ATR bench E2E-TR',
  steady: 'Harrowgate Fibres (invented)',
  drifting: 'Pellham Yarns (invented)',
};

async function main(): Promise<void> {
  const db = initDb(database);
  if (await db('material').where({ code: E2E_TREND.code }).first()) return;
  const person = async (username: string) => {
    const u = await db('app_user').where({ username }).first('id', 'full_name');
    if (!u) throw new Error(`the demo account "${username}" is missing; seed the accounts first`);
    return { id: u.id, fullName: u.full_name };
  };
  const qa = await person('quinn');
  const m = await seedApprovedMaterial(db, qa, {
    code: E2E_TREND.code,
    name: E2E_TREND.name,
    grade: 'technical',
    referenceFiles: [FIBRES.nylon66Reference],
    // Irene wrote the method and uploaded the reference; Quinn approved (never the author).
    author: await person('irene'),
  });
  const inst = await seedInstrument(db, qa, { name: E2E_TREND.instrument, state: 'valid', location: 'Goods-in lab' });
  const sample = dataFile(FIBRES.nylon66Samples[0]);
  await seedTrendHistory(db, {
    materialId: m.materialId,
    methodId: m.methodId,
    instrumentId: inst.instrumentId,
    instrumentCheckId: inst.checkId!,
    operator: await person('olga'),
    verifier: await person('victor'),
    sample: { data: sample.buffer, name: sample.name },
    sources: [E2E_TREND.steady, E2E_TREND.drifting],
    drifting: E2E_TREND.drifting,
    points: 40,
    driftFrom: 24,
    driftPerPoint: 0.35,
    days: 40,
    prefix: 'SYN-E2E',
  });
  const r = await scanTrends(db);
  console.log(`[e2e-seed-trend] ${r.raised} trend signal(s)`);
}

main()
  .then(() => console.log(`[e2e-seed-trend] synthetic trend history in ${database}`))
  .catch((e) => {
    console.error('[e2e-seed-trend] failed:', e instanceof Error ? e.message : e);
    process.exitCode = 1;
  })
  .finally(() => closeDb());
