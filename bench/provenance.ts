/**
 * Copy lookup benchmark (docs/provenance.md): 20,000 stored spectra in the fingerprint index of a
 * database of its own (drumline_bench_prov), then the lookup a measurement upload runs
 * (server/modules/provenance/copies.ts: raw bytes, decoded values, fingerprint window) for new
 * acquisitions; reports the median and p95 in ms and how many candidates each lookup had to
 * compare in full, plus the time of one full comparison (engine sameAcquisition) on real spectra.
 * Target: median lookup below 20 ms with 20,000 stored spectra (an upload's scoring takes longer).
 *
 *   npm run bench -- provenance
 *   PROV_BENCH_SPECTRA=100000 npm run bench -- provenance
 *
 * The stored fingerprints are made from the real spectra of ../shared/reference-data with
 * invented baseline drift and noise (one "stored acquisition" each); the queries are new
 * acquisitions of the same real spectra (fresh noise), so they land among their own kind.
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import knexFactory from 'knex';
import type { SpectrumFingerprintInsert } from '../server/lib/db-tables';
import { dbSettings, knexConfig, repoRoot } from '../db/config';
import { migrateDatabase, recreateDatabase } from '../db/migrate';
import { candidatesQuery } from '../server/modules/provenance/copies';
import { provenanceKeys } from '../server/modules/provenance/keys';
import { estimateNoise, readSpectrum, sameAcquisition, type Spectrum } from '../server/spectra';

const DB_NAME = 'drumline_bench_prov';
const SPECTRA = Number(process.env.PROV_BENCH_SPECTRA ?? 20_000);
const QUERIES = 200;
const TARGET_MEDIAN_MS = 20;

function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function realSpectra(): Spectrum[] {
  const root = path.resolve(repoRoot, '../shared/reference-data');
  const out: Spectrum[] = [];
  for (const dir of ['atr-ftir', 'atr-ftir/biodiesel', 'atr-ftir-fibres', 'ftir-oils', 'nir-polyolefins'])
    for (const f of readdirSync(path.join(root, dir)).filter((n) => n.endsWith('.csv')))
      out.push(readSpectrum(new Uint8Array(readFileSync(path.join(root, dir, f))), f));
  return out;
}

/** A new acquisition of a real spectrum: fresh noise at its own level, a small baseline shift. */
function acquisition(s: Spectrum, rand: () => number): Spectrum {
  const sigma = Math.max(estimateNoise(s.y), 1e-6);
  const shift = (rand() - 0.5) * 0.02;
  const y = new Float64Array(s.y.length);
  for (let i = 0; i < y.length; i++) {
    const g = Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
    y[i] = s.y[i] + shift + sigma * g;
  }
  return { x: s.x, y, meta: s.meta };
}

const pct = (sorted: number[], p: number) =>
  sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)];

export async function runProvenanceBench(): Promise<{ ok: boolean }> {
  console.log(`[bench] provenance: copy lookup with ${SPECTRA.toLocaleString('en-GB')} stored spectra`);
  await recreateDatabase(DB_NAME);
  await migrateDatabase(DB_NAME);
  const owner = knexFactory(knexConfig(dbSettings('owner', DB_NAME), { min: 1, max: 1 }));
  const runtime = knexFactory(knexConfig(dbSettings('runtime', DB_NAME), { min: 0, max: 2 }));
  try {
    const base = realSpectra();
    const rand = prng(11);
    await owner.raw('SET FOREIGN_KEY_CHECKS = 0');
    const t0 = performance.now();
    let batch: SpectrumFingerprintInsert[] = [];
    for (let i = 0; i < SPECTRA; i++) {
      const s = acquisition(base[i % base.length], rand);
      const k = provenanceKeys(s);
      const fp = k.fingerprint;
      batch.push({
        file_id: i + 1,
        record_type: 'measurement',
        record_id: i + 1,
        raw_sha256: k.decodedSha256.split('').reverse().join(''),
        decoded_sha256: k.decodedSha256,
        points: fp.points,
        x_low: fp.xLow,
        x_high: fp.xHigh,
        seg1: fp.segments[0],
        seg2: fp.segments[1],
        seg3: fp.segments[2],
        seg4: fp.segments[3],
        noise: fp.noise,
        y_range: fp.yRange,
        y_step: k.yStep,
        created_at: new Date(),
      });
      if (batch.length === 500) {
        await owner('spectrum_fingerprint').insert(batch);
        batch = [];
      }
    }
    if (batch.length) await owner('spectrum_fingerprint').insert(batch);
    await owner.raw('ANALYZE TABLE spectrum_fingerprint');
    console.log(`  seeded in ${((performance.now() - t0) / 1000).toFixed(1)} s`);

    const times: number[] = [];
    const candidates: number[] = [];
    for (let q = 0; q < QUERIES + 5; q++) {
      const s = acquisition(base[Math.floor(rand() * base.length)], rand);
      const k = provenanceKeys(s);
      const t = performance.now();
      await runtime('stored_file').where({ sha256: k.decodedSha256 }).select('id');
      await runtime('spectrum_fingerprint').where({ decoded_sha256: k.decodedSha256 }).first('id');
      const rows = await candidatesQuery(runtime, k);
      const ms = performance.now() - t;
      if (q >= 5) {
        times.push(ms);
        candidates.push(rows.length);
      }
    }
    times.sort((a, b) => a - b);
    candidates.sort((a, b) => a - b);
    const cmp: number[] = [];
    for (let i = 0; i < 200; i++) {
      const s = base[i % base.length];
      const other = acquisition(s, rand);
      const t = performance.now();
      sameAcquisition(s, other);
      cmp.push(performance.now() - t);
    }
    cmp.sort((a, b) => a - b);
    const median = pct(times, 50);
    console.log(
      `  lookup (DB): median ${median.toFixed(2)} ms, p95 ${pct(times, 95).toFixed(2)} ms, max ${times.at(-1)!.toFixed(2)} ms over ${QUERIES} uploads`,
    );
    console.log(
      `  candidates compared in full per upload: median ${pct(candidates, 50)}, p95 ${pct(candidates, 95)}, max ${candidates.at(-1)}`,
    );
    console.log(`  one full comparison (sameAcquisition, real spectra): median ${pct(cmp, 50).toFixed(3)} ms`);
    const ok = median < TARGET_MEDIAN_MS;
    console.log(`  target: median < ${TARGET_MEDIAN_MS} ms -> ${ok ? 'met' : 'NOT met'}`);
    return { ok };
  } finally {
    await owner.destroy();
    await runtime.destroy();
  }
}
