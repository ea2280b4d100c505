/**
 * `npm run restore -- <backup folder> [--database <name>]`: restores a backup made by
 * `npm run backup` into a fresh database, proves it (migrations, triggers, grants, row counts
 * and checksums, audit chain, certificates, stored files) and records a signed restore event
 * (server/ops/backup.ts, docs/operations.md). Exits 1 when any check fails.
 */
import { restore } from '../server/ops/backup';

async function main(): Promise<void> {
  const folder = process.argv.slice(2).find((a, i, all) => !a.startsWith('--') && all[i - 1] !== '--database');
  if (!folder) throw new Error('usage: npm run restore -- <backup folder> [--database <name>]');
  const i = process.argv.indexOf('--database');
  const r = await restore({ folder, database: i > 0 ? process.argv[i + 1] : undefined });
  console.log(
    `[restore] ${r.database}: loaded in ${r.loadMs} ms, checked and recorded in ${r.durationMs} ms; ` +
      `audit chain ${r.checks.chain.ok ? 'intact' : 'BROKEN'} (${r.checks.chain.events} events), ` +
      `${r.checks.certificates.checked} certificates, ${r.checks.files.checked} stored files; restore event #${r.restoreEventId}`,
  );
  if (r.problems.length) {
    for (const p of r.problems) console.error(`[restore] problem: ${p}`);
    process.exitCode = 1;
  }
}

main().catch((e) => {
  console.error('[restore] failed:', e instanceof Error ? e.message : e);
  process.exitCode = 1;
});
