/**
 * `npm run backup [-- --dir <parent folder>] [--keys-to <folder>]`: a consistent backup of the
 * site's database into a dated folder with a manifest of SHA-256 sums (server/ops/backup.ts,
 * docs/operations.md). --keys-to also copies the signing and audit-chain keys, into a folder of
 * their own that must not lie inside the backup folder.
 */
import { backup, backupKeys } from '../server/ops/backup';

function arg(name: string): string | undefined {
  const i = process.argv.indexOf(name);
  return i > 0 ? process.argv[i + 1] : undefined;
}

async function main(): Promise<void> {
  const { folder, manifest } = await backup({ dir: arg('--dir') });
  const rows = Object.values(manifest.tables).reduce((n, t) => n + t.rows, 0);
  console.log(
    `[backup] ${manifest.database}: ${Object.keys(manifest.tables).length} tables, ${rows} rows, audit head ${manifest.auditHead.lastId}, ` +
      `${(Object.values(manifest.files)[0].bytes / 1e6).toFixed(1)} MB in ${manifest.durationMs} ms${manifest.exact ? '' : ' (written to during the dump: counts approximate)'}`,
  );
  console.log(`[backup] ${folder}`);
  const keysTo = arg('--keys-to');
  if (keysTo) {
    const k = backupKeys(keysTo);
    console.log(`[backup] keys (${k.files.join(', ')}) -> ${k.folder}: store them apart from the database backups`);
  }
}

main().catch((e) => {
  console.error('[backup] failed:', e instanceof Error ? e.message : e);
  process.exitCode = 1;
});
