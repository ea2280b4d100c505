/**
 * Benchmark entry: `npm run bench` runs every bench below in order;
 * `npm run bench -- engine` (or several names) runs only those.
 * Benches in OPT_IN run only when named (`npm run bench -- audit`) or with `-- all`: the audit
 * bench seeds 1,000,000 events into its own database the first time (about 5 minutes).
 * Each bench module exports a function returning { ok } (all targets met).
 * To add a bench, add one line to BENCHES.
 */
type Bench = (args: string[]) => Promise<{ ok: boolean }>;

const BENCHES: Record<string, Bench> = {
  engine: async () => (await import('./engine')).runEngineBench(),
  processing: async () => (await import('./processing')).runProcessingBench(),
  audit: async (args) => (await import('./audit')).runAuditBench(args),
  certificate: async () => (await import('./certificate')).runCertificateBench(),
  health: async () => (await import('./health')).runHealthBench(),
  provenance: async () => (await import('./provenance')).runProvenanceBench(),
};

const OPT_IN = new Set(['audit']);

async function main(): Promise<number> {
  const argv = process.argv.slice(2);
  const names = argv.filter((a) => a in BENCHES);
  const rest = argv.filter((a) => !(a in BENCHES) && a !== 'all');
  let ok = true;
  const all = argv.includes('all');
  for (const name of names.length ? names : Object.keys(BENCHES).filter((n) => all || !OPT_IN.has(n))) {
    const result = await BENCHES[name](rest);
    ok &&= result.ok;
  }
  return ok ? 0 : 1;
}

main().then(
  (code) => process.exit(code),
  (e) => {
    console.error('[bench] failed:', e);
    process.exit(2);
  },
);
