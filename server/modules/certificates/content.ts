/**
 * What an identity certificate states, gathered from the records of a passed, verified lot.
 * The same plain object is printed into the PDF and stored (JSON) beside it.
 *
 * Which measurement counts for a container: its latest measurement in the last verified
 * attempt whose scope includes it (a QA-authorised retest covers only the containers QA named;
 * returned attempts never count). The lot qualifies only when every container's counting result
 * is a pass (EU GMP Annex 8 para 2; 21 CFR 211.84(d)(1)).
 */
import { dateOnly, iso } from '../../lib/dates';
import { parseJson, type Db } from '../../lib/db';
import { conflict, notFound } from '../../lib/errors';
import { sampledContainerIds } from '../sampling';
import type { IdentityResult } from '../../spectra';
import type { CertificateContent, ContainerLine, SignatureLine } from './contract';
import * as repo from './repo';

export interface GatherInput {
  lotId: number;
  testId: number;
  number: string;
  issuedAt: Date;
  site: { name: string; address: string; timeZone: string };
  publicUrl: string;
  signingFingerprint: string;
  supersedes: CertificateContent['supersedes'];
}

function sigLine(s: repo.SignatureRow | undefined, record: string): SignatureLine | null {
  if (!s) return null;
  return {
    printedName: s.printed_name,
    meaning: s.meaning,
    signedAt: new Date(s.signed_at).toISOString(),
    statement: s.statement,
    record,
  };
}

export function verificationUrl(publicUrl: string, number: string): string {
  return `${publicUrl.replace(/\/+$/, '')}/certificates/verify?number=${encodeURIComponent(number)}`;
}

function bandsOf(result: IdentityResult | null): { matched: number | null; total: number | null } {
  const c = result?.criteria?.find((k) => k.key === 'band-concordance');
  if (!c) return { matched: null, total: null };
  return { matched: Number(c.value), total: Number(c.limit) };
}

function bestReference(result: IdentityResult | null, referenceIds: number[]): number | null {
  const b = result?.bestReferenceId;
  if (b !== null && b !== undefined) {
    const n = Number(b);
    if (Number.isInteger(n) && referenceIds.includes(n)) return n;
  }
  return referenceIds[0] ?? null;
}

/** Collects and checks everything the certificate of a lot states. Throws 404/409 when the lot does not qualify. */
export async function gatherContent(
  db: Db,
  input: GatherInput,
): Promise<{ content: CertificateContent; bestReferenceCodes: Map<number, string> }> {
  const lot = await repo.findLot(db, input.lotId);
  if (!lot) throw notFound('The lot');
  if (lot.identity_status !== 'passed')
    throw conflict(
      `Lot ${lot.lot_number} has not passed identity testing (status: ${lot.identity_status}); no certificate can be issued.`,
    );
  const material = await repo.findMaterial(db, lot.material_id);
  if (!material) throw notFound('The material of the lot');
  const allContainers = await repo.containersOf(db, lot.id);
  if (allContainers.length === 0) throw conflict(`Lot ${lot.lot_number} has no containers.`);
  // Under a reduced sampling plan the certificate covers the sampled containers (and says so).
  const sampled = await sampledContainerIds(db, lot.id);
  const containers = sampled === null ? allContainers : allContainers.filter((c) => sampled.includes(c.id));
  const reduced = lot.sampling_plan === 'sqrt-n-plus-1' && containers.length < allContainers.length;

  const tests = await repo.testsOf(db, lot.id);
  const test = tests.find((t) => t.id === input.testId);
  if (!test) throw notFound('The identity test of this lot');
  if (test.status !== 'verified')
    throw conflict(`Test attempt ${test.attempt} of lot ${lot.lot_number} is not verified (status: ${test.status}).`);

  // Verified attempts up to and including the given one, in attempt order, with their scope.
  const verified = tests.filter((t) => t.status === 'verified' && t.attempt <= test.attempt);
  const scopes = new Map<number, number[] | null>();
  for (const t of verified)
    scopes.set(t.id, t.retest_of_investigation_id ? await repo.retestScope(db, t.retest_of_investigation_id) : null);
  const measurements = await repo.measurementsOfTests(
    db,
    verified.map((t) => t.id),
  );

  const counting = new Map<number, { m: repo.MeasurementRow; t: repo.TestRow }>();
  for (const c of containers) {
    for (const t of verified) {
      const scope = scopes.get(t.id);
      if (scope && !scope.includes(c.id)) continue;
      let latest: repo.MeasurementRow | undefined;
      for (const m of measurements)
        if (m.test_id === t.id && m.container_id === c.id && (!latest || m.id > latest.id)) latest = m;
      if (latest) counting.set(c.id, { m: latest, t });
    }
  }
  const missing = containers.filter((c) => !counting.has(c.id));
  if (missing.length)
    throw conflict(
      `Lot ${lot.lot_number}: no verified result for container ${missing.map((c) => c.label).join(', ')}.`,
    );
  const notPassed = containers.filter((c) => counting.get(c.id)!.m.verdict !== 'pass');
  if (notPassed.length)
    throw conflict(
      `Lot ${lot.lot_number}: container ${notPassed.map((c) => c.label).join(', ')} did not pass; no certificate can be issued.`,
    );

  const usedTests = verified.filter((t) => [...counting.values()].some((x) => x.t.id === t.id));
  // measurements whose file came from the instrument's export folder (docs/instrument-intake.md)
  const fromFolder = new Set<number>(
    (
      await db('folder_acquisition_event')
        .whereIn(
          'measurement_id',
          [...counting.values()].map((x) => x.m.id),
        )
        .select('measurement_id')
    )
      .map((r) => r.measurement_id)
      .filter((id): id is number => id !== null),
  );
  const containerLines: ContainerLine[] = containers.map((c) => {
    const { m, t } = counting.get(c.id)!;
    const result = parseJson<IdentityResult | null>(m.result, null);
    const refIds = parseJson<unknown[]>(m.reference_ids, []).map(Number);
    const bands = bandsOf(result);
    const score = m.match_score !== null && m.match_score !== undefined ? Number(m.match_score) : null;
    return {
      containerId: c.id,
      seq: c.seq,
      label: c.label,
      measurementId: m.id,
      testAttempt: t.attempt,
      matchScore: score,
      bandsMatched: bands.matched,
      bandsTotal: bands.total,
      verdict: m.verdict,
      rawFileSha256: m.file_sha256,
      rawFileName: m.file_name,
      measuredAt: new Date(m.created_at).toISOString(),
      bestReferenceId: bestReference(result, refIds),
      // only stated for a file from the export folder, so certificates issued before keep their content
      ...(fromFolder.has(m.id) ? { source: 'export-folder' as const } : {}),
    };
  });

  const counted = [...counting.values()].map((x) => x.m);
  const methodIds = [...new Set(counted.map((m) => m.method_id))];
  const refIds = [...new Set(counted.flatMap((m) => parseJson<unknown[]>(m.reference_ids, []).map(Number)))];
  const instrumentIds = [...new Set(counted.map((m) => m.instrument_id))];
  const checkIds = [...new Set(counted.map((m) => m.instrument_check_id))];
  const [methods, references, instruments, checks] = await Promise.all([
    repo.methodsByIds(db, methodIds),
    repo.referencesByIds(db, refIds),
    repo.instrumentsByIds(db, instrumentIds),
    repo.checksByIds(db, checkIds),
  ]);
  const sigIds = [
    ...methods.map((m) => m.approved_signature_id),
    ...references.map((r) => r.approved_signature_id),
    ...checks.map((k) => k.signature_id),
    ...usedTests.flatMap((t) => [t.performed_signature_id, t.verified_signature_id]),
  ].filter((x): x is number => x !== null && x !== undefined);
  const sigs = await repo.signaturesByIds(db, sigIds.map(Number));
  const sig = (id: number | null, record: string) => (id === null ? null : sigLine(sigs.get(Number(id)), record));

  const signatures: SignatureLine[] = [];
  for (const t of usedTests) {
    const p = sig(t.performed_signature_id, `Identity test attempt ${t.attempt}`);
    const v = sig(t.verified_signature_id, `Identity test attempt ${t.attempt}`);
    if (!p || !v)
      throw conflict(`Test attempt ${t.attempt} of lot ${lot.lot_number} lacks its performed or verified signature.`);
    signatures.push(p, v);
  }
  const instrumentName = new Map(instruments.map((i) => [i.id, i.name]));

  const content: CertificateContent = {
    number: input.number,
    issuedAt: input.issuedAt.toISOString(),
    site: input.site,
    verificationUrl: verificationUrl(input.publicUrl, input.number),
    supersedes: input.supersedes,
    lot: {
      id: lot.id,
      lotNumber: lot.lot_number,
      supplier: lot.supplier,
      supplierLot: lot.supplier_lot,
      receivedDate: dateOnly(lot.received_date),
      containerCount: allContainers.length,
      ...(reduced
        ? {
            sampling: {
              plan: 'sqrt-n-plus-1' as const,
              sampledCount: containers.length,
              sampledLabels: containers.map((c) => c.label),
            },
          }
        : {}),
    },
    material: {
      id: material.id,
      code: material.code,
      name: material.name,
      grade: material.grade,
      monographRef: material.monograph_ref,
    },
    tests: usedTests.map((t) => ({ id: t.id, attempt: t.attempt })),
    testId: test.id,
    methods: methods.map((m) => {
      const p = parseJson<{ range?: { from?: number; to?: number }; thresholds?: { minCorrelation?: number } }>(
        m.params,
        {},
      );
      return {
        id: m.id,
        version: m.version,
        technique: m.technique,
        rangeFrom: p.range?.from ?? null,
        rangeTo: p.range?.to ?? null,
        minCorrelation: p.thresholds?.minCorrelation ?? null,
        approval: sig(m.approved_signature_id, `Identity method version ${m.version}`),
      };
    }),
    references: references.map((r) => ({
      id: r.id,
      code: r.code,
      supplier: r.supplier,
      supplierLot: r.supplier_lot,
      approval: sig(r.approved_signature_id, `Reference spectrum ${r.code}`),
    })),
    instruments: instruments.map((i) => ({
      id: i.id,
      name: i.name,
      serialNumber: i.serial_number,
      technique: i.technique,
      sampling: i.sampling,
      location: i.location,
    })),
    instrumentChecks: checks.map((k) => ({
      id: k.id,
      instrumentId: k.instrument_id,
      instrumentName: instrumentName.get(k.instrument_id) ?? String(k.instrument_id),
      verdict: k.verdict,
      performedAt: iso(k.performed_at)!,
      validUntil: iso(k.valid_until),
      spec: k.spec_kind ? `${k.spec_kind} v${k.spec_version}` : '',
      signature: sig(k.signature_id, `Instrument check ${k.id}`),
    })),
    containers: containerLines,
    signatures,
    engineVersions: [...new Set(counted.map((m) => m.engine_version))],
    signingFingerprint: input.signingFingerprint,
  };
  return { content, bestReferenceCodes: new Map(references.map((r) => [r.id, r.code])) };
}
