/**
 * A SYNTHETIC history of passed identity results for trending (docs/trending.md), for the demo
 * and the tests only. Each point is a container of its own lot, measured on a past day and
 * verified: the spectrum is GENERATED from one sample spectrum that passes (a real one from
 * ../shared/reference-data in the tests, a demo fixture spectrum in the demo)
 * by shifting its wavenumber axis and adding a little seeded noise, stored as its own file
 * (named "synthetic-…", every file distinct), and scored by the real engine against the
 * material's approved references. One source drifts: from `driftFrom` on, its axis shift grows
 * by `driftPerPoint` cm⁻¹ per point, so its band shift rises and its correlation falls while
 * every result still passes.
 *
 * Every point names the instrument's passing check given by the caller (a known limit of the
 * synthetic history: that check was recorded when the seed ran, after the points' past times;
 * copying the check per point would store its film spectrum twice, which the provenance rules
 * refuse). Every generated file gets its spectrum fingerprint, as an upload does.
 * The past times are set here, by the seed, through the owner's or runtime's database
 * connection: the running application never backdates a record (its clock is the server's).
 * The performed and verified signatures are real e-signature rows over the content the
 * application signs (server/modules/testing/context.ts), so the integrity sweep finds them intact.
 * The audit trail says what happened (events by the seed, at the time of seeding, naming the
 * past times), and every passed lot gets its identity certificate, issued by the seed now; the
 * lots stay in quarantine as the application leaves a passed lot.
 */
import type { Knex } from 'knex';
import { sha256Hex } from '../../server/lib/canonical';
import { appendAudit, type Actor } from '../../server/lib/audit';
import { contentHash } from '../../server/lib/esign';
import { issueCertificate } from '../../server/modules/certificates';
import { provenanceKeys, recordFingerprint } from '../../server/modules/provenance';
import { toEngineBands } from '../../server/modules/library';
import { loadContext, signedContent } from '../../server/modules/testing';
import type { StoredBand } from '../../server/modules/library/contract';
import { must, parseJson } from '../../server/lib/db';
import { prepareReference, readSpectrum, scoreAgainst, type IdentityMethod } from '../../server/spectra';

export interface HistoryPerson {
  id: number;
  fullName: string;
}

export interface TrendHistoryOptions {
  materialId: number;
  methodId: number;
  instrumentId: number;
  /** a passing instrument check of the instrument, named by every point */
  instrumentCheckId: number;
  operator: HistoryPerson;
  verifier: HistoryPerson;
  /** a sample spectrum of the material that passes (its bytes and file name) */
  sample: { data: Uint8Array; name: string };
  /** sources in turn: point i comes from sources[i % sources.length] */
  sources: string[];
  /** the source that drifts */
  drifting: string;
  points: number;
  /** index of the first point from which the drifting source shifts */
  driftFrom: number;
  driftPerPoint: number;
  /** the history ends this many days before `now` and spans `days` */
  days: number;
  now?: Date;
  /** lot-number prefix, unique per history */
  prefix: string;
}

/** A small seeded generator (mulberry32): the same history every time. */
function rng(seed: number): () => number {
  let s = seed | 0;
  return () => {
    s = (s + 0x6d2b79f5) | 0;
    let t = Math.imul(s ^ (s >>> 15), 1 | s);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** The sample's CSV with its wavenumber axis shifted by `shift` and seeded noise added. */
function generatedCsv(x: number[], y: number[], shift: number, noise: number, rand: () => number): string {
  const lines = ['wavenumber_cm-1,absorbance'];
  for (let i = 0; i < x.length; i++) {
    // y'(x) = y(x - shift): linear interpolation on the ascending grid
    const target = x[i] - shift;
    let j = i;
    while (j > 0 && x[j] > target) j--;
    while (j < x.length - 2 && x[j + 1] < target) j++;
    const k = Math.min(j + 1, x.length - 1);
    const f = x[k] === x[j] ? 0 : (target - x[j]) / (x[k] - x[j]);
    const v = y[j] + Math.max(0, Math.min(1, f)) * (y[k] - y[j]) + (rand() - 0.5) * 2 * noise;
    lines.push(`${x[i]},${v.toFixed(7)}`);
  }
  return lines.join('\n') + '\n';
}

/** Who wrote the synthetic rows, in the audit trail: the seed, never the people named on them. */
export const HISTORY_ACTOR: Actor = { id: null, name: 'Drumline demo seed (synthetic trend history)' };

export async function seedTrendHistory(k: Knex, o: TrendHistoryOptions): Promise<{ measurementIds: number[] }> {
  const now = o.now ?? new Date();
  // the caller names an approved method version of the seed
  const methodRow = must(await k('identity_method').where({ id: o.methodId }).first(), `Method version ${o.methodId}`);
  const method = JSON.parse(methodRow.params) as IdentityMethod;
  const refs = await k('reference_spectrum').where({ material_id: o.materialId, status: 'approved' }).orderBy('id');
  const prepared = [];
  for (const r of refs) {
    const f = must(await k('stored_file').where({ id: r.file_id }).first(), `Stored file ${r.file_id}`);
    const spectrum = readSpectrum(new Uint8Array(f.data), f.file_name);
    prepared.push(
      prepareReference(
        {
          id: String(r.id),
          label: r.code,
          materialId: String(o.materialId),
          spectrum,
          bands: toEngineBands(parseJson<StoredBand[]>(r.bands, [])),
        },
        method,
      ),
    );
  }
  const sample = readSpectrum(new Uint8Array(o.sample.data), o.sample.name);
  const x = Array.from(sample.x);
  const y = Array.from(sample.y);
  const rand = rng(o.points * 7919 + o.prefix.length);
  const measurementIds: number[] = [];
  const perPoint = (o.days * 86_400_000) / o.points;
  const start = now.getTime() - (o.days + 1) * 86_400_000;
  let driftStep = 0;
  for (let i = 0; i < o.points; i++) {
    const source = o.sources[i % o.sources.length];
    const at = new Date(start + i * perPoint + 9 * 3_600_000);
    const drifting = source === o.drifting && i >= o.driftFrom;
    if (drifting) driftStep++;
    const shift = (rand() - 0.5) * 0.2 + (drifting ? driftStep * o.driftPerPoint : 0);
    const csv = generatedCsv(x, y, shift, 0.0008, rand);
    const bytes = Buffer.from(csv, 'utf8');
    const lotNumber = `${o.prefix}-${String(i + 1).padStart(3, '0')}`;
    const fileName = `synthetic-${lotNumber}.csv`;
    const result = scoreAgainst(readSpectrum(new Uint8Array(bytes), fileName), prepared, method);
    if (result.verdict !== 'pass')
      throw new Error(`synthetic history point ${lotNumber} did not pass (${result.explanation.join(' ')})`);
    const day = at.toISOString().slice(0, 10);
    const [lotId] = await k('lot').insert({
      lot_number: lotNumber,
      material_id: o.materialId,
      supplier: source,
      supplier_lot: `SYN-${String(1000 + i)}`,
      container_count: 1,
      received_date: day,
      notes: 'Synthetic trend history (demo data, generated spectrum).',
      status: 'quarantine',
      identity_status: 'passed',
      created_by: o.operator.id,
      created_at: at,
      updated_at: at,
    });
    const [containerId] = await k('container').insert({ lot_id: lotId, seq: 1, label: `${lotNumber}-001` });
    const [fileId] = await k('stored_file').insert({
      sha256: sha256Hex(bytes),
      file_name: fileName,
      media_type: 'text/csv',
      size: bytes.length,
      data: bytes,
      uploaded_by: o.operator.id,
      uploaded_at: at,
    });
    const [testId] = await k('identity_test').insert({
      lot_id: lotId,
      attempt: 1,
      status: 'in-progress',
      method_id: o.methodId,
      instrument_id: o.instrumentId,
      created_by: o.operator.id,
      created_at: at,
      updated_at: at,
    });
    const [mId] = await k('measurement').insert({
      test_id: testId,
      container_id: containerId,
      file_id: fileId,
      instrument_id: o.instrumentId,
      instrument_check_id: o.instrumentCheckId,
      method_id: o.methodId,
      reference_ids: JSON.stringify(refs.map((r) => r.id)),
      verdict: result.verdict,
      match_score: result.references.find((r) => r.referenceId === result.bestReferenceId)?.correlation ?? null,
      result: JSON.stringify(result),
      engine_version: result.engineVersion,
      created_by: o.operator.id,
      created_at: at,
    });
    measurementIds.push(mId);
    await recordFingerprint(k, {
      fileId: fileId,
      recordType: 'measurement',
      recordId: mId,
      sha256: sha256Hex(bytes),
      keys: provenanceKeys(readSpectrum(new Uint8Array(bytes), fileName)),
      at,
    });
    const content = signedContent(await loadContext(k, testId));
    const sign = async (who: HistoryPerson, meaning: string, when: Date) => {
      const [id] = await k('e_signature').insert({
        user_id: who.id,
        printed_name: who.fullName,
        meaning,
        entity_type: 'identity_test',
        entity_id: String(testId),
        content_hash: contentHash(content),
        statement: 'synthetic trend history (demo data)',
        signed_at: when,
      });
      return id;
    };
    const performedAt = new Date(at.getTime() + 20 * 60_000);
    const verifiedAt = new Date(at.getTime() + 90 * 60_000);
    const performedSig = await sign(o.operator, 'performed', performedAt);
    const verifiedSig = await sign(o.verifier, 'verified', verifiedAt);
    await k('identity_test').where({ id: testId }).update({
      status: 'awaiting-verification',
      performed_by: o.operator.id,
      performed_signature_id: performedSig,
      updated_at: performedAt,
    });
    await k('identity_test').where({ id: testId }).update({
      status: 'verified',
      verified_by: o.verifier.id,
      verified_signature_id: verifiedSig,
      updated_at: verifiedAt,
    });
    // The trail says what happened: the seed wrote these rows now, with past times, and the
    // signature rows it wrote are audited like every signature (server clock, hash chain).
    await k.transaction(async (trx) => {
      await appendAudit(trx, {
        actor: HISTORY_ACTOR,
        action: 'demo.synthetic-history-written',
        entityType: 'lot',
        entityId: lotId,
        after: { lotNumber, testId, measurementId: mId, fileName, source, recordedAt: at.toISOString() },
        reason: 'Synthetic trend history (demo data): generated spectrum, records written by the seed with past times.',
        ip: null,
      });
      for (const [sigId, meaning, who, when] of [
        [performedSig, 'performed', o.operator, performedAt],
        [verifiedSig, 'verified', o.verifier, verifiedAt],
      ] as const)
        await appendAudit(trx, {
          actor: HISTORY_ACTOR,
          action: 'signature.signed',
          entityType: 'identity_test',
          entityId: testId,
          after: {
            signatureId: sigId,
            meaning,
            contentHash: contentHash(content),
            signer: who.fullName,
            signedAt: when.toISOString(),
          },
          reason: 'synthetic trend history (demo data)',
          ip: null,
        });
    });
    // every passed lot gets its identity certificate (issued now, by the seed)
    await issueCertificate(k, { lotId: lotId, testId: testId, actor: HISTORY_ACTOR });
  }
  return { measurementIds };
}
