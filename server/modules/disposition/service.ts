/**
 * QA disposition (issue 14 item 5). A QA manager releases a lot with an e-signature (meaning
 * "released") only when every condition holds:
 * - identity passed with a current (not superseded) identity certificate; for a material flagged
 *   "IR not suitable", the replacing identity test's recorded result instead;
 * - no open investigation;
 * - the material's other required checks (its current profile) recorded as conforming;
 * - the source not blocked now; the lot sampled (a lot received under a sampling plan).
 * Release sets the retest date from the profile's retest interval. Rejection is signed with a
 * reason. The release record is separate from the identity certificate (21 CFR 211.84(a): each lot
 * released by the quality unit; EU GMP Annex 16 is about finished batches and does not apply here).
 * Nobody releases a lot whose identity test, sampling or checks they performed or verified
 * themselves (segregation of duties, docs/architecture.md, "The identity flow").
 */
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import { formatSiteDate } from '../../lib/contract';
import { must, type Db } from '../../lib/db';
import type {
  AppUserRow,
  CertificateRow,
  LotCheckRow,
  LotDispositionRow,
  LotRow,
  MaterialRow,
  MeasurementRow,
} from '../../lib/db-tables';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { AppError, conflict, forbidden, notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { currentStatuses, holdsOf, moveLot, setContainerStatus } from '../lots';
import { oneOf } from '../../lib/db';
import { LOT_STATUSES } from '../lots/contract';
import { enqueueEvent } from '../../lib/webhook-outbox';
import {
  CHECK_OUTCOMES,
  DECISIONS,
  DISPOSITION_CAUTION,
  type CheckDef,
  type DispositionRecord,
  type LotCheckInput,
  type LotCheckRecord,
  type LotDispositionView,
  type RejectInput,
  type ReleaseCondition,
  type ReleaseInput,
} from './contract';
import { currentProfile, irNotSuitable, materialWithIr } from './profile';
import { transactionWithRetry } from '../../lib/retry';
import { latestRetest, retestsOf } from './retest';

async function lotRow(db: Db, lotId: number) {
  const lot = await db('lot as l')
    .join('material as m', 'm.id', 'l.material_id')
    .where('l.id', lotId)
    .first<(LotRow & { m_name: MaterialRow['name']; m_code: MaterialRow['code'] }) | undefined>(
      'l.*',
      'm.name as m_name',
      'm.code as m_code',
    );
  if (!lot) throw notFound('The lot');
  // the lot's material exists: lot.material_id references it, and materials are never deleted
  const material = must(await materialWithIr(db, lot.material_id), `material of lot ${lot.lot_number}`);
  return { lot, material };
}

async function checkRecords(db: Db, lotId: number): Promise<LotCheckRecord[]> {
  const rows = await db('lot_check as c')
    .join('app_user as u', 'u.id', 'c.recorded_by')
    .where('c.lot_id', lotId)
    .orderBy('c.id')
    .select<(LotCheckRow & { u_name: AppUserRow['full_name'] })[]>('c.*', 'u.full_name as u_name');
  const sigs = await signaturesFor(db, 'lot', lotId);
  return rows.map((r) => ({
    id: r.id,
    checkKey: r.check_key,
    outcome: oneOf(CHECK_OUTCOMES, r.outcome, `lot check ${r.id} outcome`),
    reference: r.reference,
    note: r.note,
    recordedBy: { id: r.recorded_by, name: r.u_name },
    recordedAt: new Date(r.recorded_at).toISOString(),
    signature: sigs.find((s) => s.id === r.signature_id) ?? null,
  }));
}

async function currentCertificate(db: Db, lotId: number) {
  return db('certificate as c')
    .leftJoin('certificate as n', 'n.supersedes_id', 'c.id')
    .where('c.lot_id', lotId)
    .whereNull('n.id')
    .orderBy('c.id', 'desc')
    .first<Pick<CertificateRow, 'id' | 'number' | 'issued_at'> | undefined>('c.id', 'c.number', 'c.issued_at');
}

/** Every release condition of a lot, each with whether it holds and why not. */
export async function releaseConditions(
  db: Db,
  lotId: number,
): Promise<{
  conditions: ReleaseCondition[];
  required: (CheckDef & { record: LotCheckRecord | null })[];
  checks: LotCheckRecord[];
  certificate: { id: number; number: string; issued_at: Date } | null;
  profile: Awaited<ReturnType<typeof currentProfile>>;
}> {
  const { lot, material } = await lotRow(db, lotId);
  const profile = await currentProfile(db, lot.material_id);
  const checks = await checkRecords(db, lotId);
  const latest = new Map<string, LotCheckRecord>();
  for (const c of checks) latest.set(c.checkKey, c);
  const required = (profile?.checks ?? []).map((d) => ({ ...d, record: latest.get(d.key) ?? null }));
  const conditions: ReleaseCondition[] = [];

  conditions.push({
    key: 'profile',
    label: 'Material master: retest interval and release checks approved by QA',
    met: !!profile,
    detail: profile
      ? `Profile version ${profile.version}: retest after ${profile.retestMonths} months, ${profile.riskClass} risk.`
      : `${material.name} has no approved disposition profile; QA approves one first (it sets the retest date).`,
  });

  const retest = await latestRetest(db, lotId);
  let cert = await currentCertificate(db, lotId);
  // After a retest only a certificate of the retest counts (issued after the retest started).
  if (cert && retest && new Date(cert.issued_at) < new Date(retest.started_at)) cert = undefined;
  if (irNotSuitable(material)) {
    const alt = required.find((r) => r.kind === 'alternative-identity');
    // after a retest, the replacing test is recorded again for the retest
    const fresh = !retest || (!!alt?.record && new Date(alt.record.recordedAt) >= new Date(retest.started_at));
    const ok = alt?.record?.outcome === 'conforms' && fresh;
    conditions.push({
      key: 'identity',
      label: 'Identity confirmed by the test that replaces IR (material flagged "IR not suitable")',
      met: ok,
      detail: ok
        ? `${alt!.label}: conforms (${alt!.record!.reference}).`
        : alt?.record?.outcome === 'conforms'
          ? 'The lot is under retest: record the result of the replacing identity test for the retest.'
          : 'Record the result of the replacing identity test as conforming (reference, result, signed).',
    });
  } else {
    const ok = lot.identity_status === 'passed' && !!cert;
    conditions.push({
      key: 'identity',
      label: 'Identity passed, with a current identity certificate',
      met: ok,
      detail: ok
        ? `Identity passed; certificate ${cert!.number}.`
        : lot.identity_status !== 'passed'
          ? `The identity status is "${lot.identity_status}".`
          : retest
            ? 'Identity passed in the retest but its certificate is not issued yet.'
            : 'Identity passed but the certificate is not issued yet.',
    });
  }

  const open = await db('investigation').where({ lot_id: lotId }).whereNot('status', 'closed').select('number');
  conditions.push({
    key: 'investigations',
    label: 'No open investigation',
    met: open.length === 0,
    detail: open.length ? `Open: ${open.map((o) => o.number).join(', ')}.` : 'None open.',
  });

  // one place decides a container's status (server/modules/lots/state.ts): a blocked one stops the release
  const statuses = await currentStatuses(db, lotId);
  const holds = await holdsOf(db, lotId);
  const labels = new Map(
    (await db('container').where({ lot_id: lotId }).select('id', 'label')).map((x) => [x.id, x.label]),
  );
  const blocked = [...statuses].filter(([, st]) => st === 'blocked').map(([id]) => id);
  conditions.push({
    key: 'containers',
    label: 'No container blocked',
    met: blocked.length === 0,
    detail: blocked.length
      ? `Blocked: ${blocked.map((id) => `${labels.get(id)} (${(holds.get(id) ?? ['blocked']).join('; ')})`).join(', ')}.`
      : 'None blocked.',
  });

  const missing = required.filter((r) => r.kind !== 'alternative-identity' || !irNotSuitable(material));
  const notOk = missing.filter((r) => r.record?.outcome !== 'conforms');
  conditions.push({
    key: 'checks',
    label: "The material's other required checks recorded as conforming",
    met: !!profile && notOk.length === 0,
    detail: !profile
      ? 'No profile, so no checklist.'
      : notOk.length
        ? `Not recorded as conforming: ${notOk.map((r) => r.label).join('; ')}.`
        : `${missing.length} check(s) conform.`,
  });

  let sourceOk = true;
  let sourceDetail = 'The lot was received before the supplier master (no source link).';
  if (lot.source_id) {
    const st = await db('source_status').where({ source_id: lot.source_id }).orderBy('id', 'desc').first();
    sourceOk = st?.status !== 'blocked';
    sourceDetail =
      st?.status === 'blocked'
        ? `The source was blocked on ${formatSiteDate(st.effective_from, 'UTC')}: ${st.reason}`
        : `Source status now: ${st?.status ?? 'unknown'}${lot.source_conditions ? `; conditions at receipt: ${lot.source_conditions}` : ''}.`;
  }
  conditions.push({ key: 'source', label: 'The source is not blocked', met: sourceOk, detail: sourceDetail });

  if (lot.sampling_plan) {
    const rec = await db('sampling_record').where({ lot_id: lotId }).first('id');
    conditions.push({
      key: 'sampling',
      label: 'Sampling recorded and signed',
      met: !!rec,
      detail: rec ? 'Sampling record signed.' : 'The lot has not been sampled.',
    });
  }
  return { conditions, required, checks, certificate: cert ?? null, profile };
}

async function dispositionOf(db: Db, lotId: number): Promise<DispositionRecord | null> {
  const r = await db('lot_disposition as d')
    .join('app_user as u', 'u.id', 'd.decided_by')
    .leftJoin('certificate as c', 'c.id', 'd.certificate_id')
    .where('d.lot_id', lotId)
    .orderBy('d.id', 'desc')
    .first<
      (LotDispositionRow & { u_name: AppUserRow['full_name']; c_number: CertificateRow['number'] | null }) | undefined
    >('d.*', 'u.full_name as u_name', 'c.number as c_number');
  if (!r) return null;
  const sigs = await signaturesFor(db, 'lot', lotId);
  return {
    id: r.id,
    decision: oneOf(DECISIONS, r.decision, `disposition ${r.id} decision`),
    reason: r.reason,
    retestDate: r.retest_date ? new Date(r.retest_date).toISOString().slice(0, 10) : null,
    certificateNumber: r.c_number ?? null,
    decidedBy: { id: r.decided_by, name: r.u_name },
    decidedAt: new Date(r.decided_at).toISOString(),
    signature: sigs.find((s) => s.id === r.signature_id) ?? null,
  };
}

export async function dispositionView(db: Db, lotId: number): Promise<LotDispositionView> {
  const { lot } = await lotRow(db, lotId);
  const c = await releaseConditions(db, lotId);
  return {
    lotId,
    lotNumber: lot.lot_number,
    status: oneOf(LOT_STATUSES, lot.status, `lot ${lot.lot_number} status`),
    conditions: c.conditions,
    releasable: lot.status === 'quarantine' && c.conditions.every((x) => x.met),
    requiredChecks: c.required,
    checks: c.checks,
    disposition: await dispositionOf(db, lotId),
    retests: await retestsOf(db, lotId),
    caution: DISPOSITION_CAUTION,
  };
}

export async function recordCheck(
  db: Knex,
  user: AuthUser,
  lotId: number,
  input: LotCheckInput,
  ip: string | null,
): Promise<LotDispositionView> {
  const { lot } = await lotRow(db, lotId);
  if (lot.status !== 'quarantine') throw conflict(`Lot ${lot.lot_number} is ${lot.status}; its checks are closed.`);
  const profile = await currentProfile(db, lot.material_id);
  const def = profile?.checks.find((c) => c.key === input.checkKey);
  if (!profile || !def)
    throw new AppError(
      422,
      'UNKNOWN_CHECK',
      `"${input.checkKey}" is not a release check of this material's profile${profile ? ` (version ${profile.version})` : ''}.`,
    );
  if ((def.kind === 'external-test' || def.kind === 'alternative-identity') && !input.reference?.trim())
    throw new AppError(
      422,
      'REFERENCE_REQUIRED',
      `${def.label}: give the reference of the report (laboratory, report number) that holds the result.`,
    );
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'check-recorded',
    entityType: 'lot',
    entityId: lotId,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    const content = {
      lot: lot.lot_number,
      check: def.key,
      kind: def.kind,
      label: def.label,
      profileVersion: profile.version,
      outcome: input.outcome,
      reference: input.reference ?? null,
    };
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'check-recorded',
      entityType: 'lot',
      entityId: lotId,
      content,
      statement: input.note ?? null,
      ip,
    });
    const [id] = await trx('lot_check').insert({
      lot_id: lotId,
      check_key: def.key,
      check_kind: def.kind,
      profile_id: profile.id,
      outcome: input.outcome,
      reference: input.reference ?? null,
      note: input.note ?? null,
      signature_id: sig.id,
      recorded_by: user.id,
      recorded_at: new Date(),
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'lot.check-recorded',
      entityType: 'lot',
      entityId: lotId,
      after: { ...content, checkId: id },
      reason: input.note ?? null,
      ip,
    });
  });
  return dispositionView(db, lotId);
}

/** Who did the lab work of a lot: performers and verifiers of its tests, the sampler, who recorded checks. */
async function labPeople(db: Db, lotId: number): Promise<Set<number>> {
  const out = new Set<number>();
  for (const t of await db('identity_test').where({ lot_id: lotId }).select('performed_by', 'verified_by')) {
    if (t.performed_by) out.add(t.performed_by);
    if (t.verified_by) out.add(t.verified_by);
  }
  for (const m of await db('measurement as m')
    .join('identity_test as t', 't.id', 'm.test_id')
    .where('t.lot_id', lotId)
    .distinct<Pick<MeasurementRow, 'created_by'>[]>('m.created_by'))
    out.add(m.created_by);
  const s = await db('sampling_record').where({ lot_id: lotId }).first('sampler_id');
  if (s) out.add(s.sampler_id);
  return out;
}

function addMonths(date: string, months: number): string {
  const [y, m, d] = date.split('-').map(Number);
  const target = new Date(Date.UTC(y, m - 1 + months, 1));
  const last = new Date(Date.UTC(target.getUTCFullYear(), target.getUTCMonth() + 1, 0)).getUTCDate();
  target.setUTCDate(Math.min(d, last));
  return target.toISOString().slice(0, 10);
}

export async function release(
  db: Knex,
  user: AuthUser,
  lotId: number,
  input: ReleaseInput,
  ip: string | null,
  siteTimeZone: string,
): Promise<LotDispositionView> {
  const { lot } = await lotRow(db, lotId);
  if (lot.status !== 'quarantine') throw conflict(`Lot ${lot.lot_number} is already ${lot.status}.`);
  if ((await labPeople(db, lotId)).has(user.id))
    throw forbidden(
      `You sampled, measured, performed or verified work on lot ${lot.lot_number}; another QA manager decides its disposition.`,
    );
  const c = await releaseConditions(db, lotId);
  const open = c.conditions.filter((x) => !x.met);
  if (open.length)
    throw new AppError(
      409,
      'RELEASE_CONDITIONS_OPEN',
      `Lot ${lot.lot_number} cannot be released yet: ${open.map((x) => `${x.label} (${x.detail})`).join('; ')}`,
      { open: open.map((x) => x.key) },
    );
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'released',
    entityType: 'lot',
    entityId: lotId,
    ip,
  });
  const today = formatSiteDate(new Date(), siteTimeZone);
  const retestDate = addMonths(today, c.profile!.retestMonths);
  await transactionWithRetry(db, async (trx) => {
    const row = must(await trx('lot').where({ id: lotId }).forUpdate().first(), `lot ${lot.lot_number}`);
    if (row.status !== 'quarantine') throw conflict(`Lot ${lot.lot_number} is already ${row.status}.`);
    const content = {
      lot: lot.lot_number,
      decision: 'released',
      retestDate,
      certificate: c.certificate?.number ?? null,
      profileVersion: c.profile!.version,
      conditions: c.conditions.map((x) => ({ key: x.key, met: x.met, detail: x.detail })),
      checks: c.required.map((r) => ({
        key: r.key,
        outcome: r.record?.outcome ?? null,
        checkId: r.record?.id ?? null,
      })),
    };
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'released',
      entityType: 'lot',
      entityId: lotId,
      content,
      statement: input.comment ?? null,
      ip,
    });
    const now = new Date();
    const [dispositionId] = await trx('lot_disposition').insert({
      lot_id: lotId,
      decision: 'released',
      reason: input.comment ?? null,
      retest_date: retestDate,
      certificate_id: c.certificate?.id ?? null,
      profile_id: c.profile!.id,
      conditions: JSON.stringify(content.conditions),
      signature_id: sig.id,
      decided_by: user.id,
      decided_at: now,
    });
    await setContainerStatus(trx, {
      lotId,
      containerIds: (await trx('container').where({ lot_id: lotId }).select('id')).map((x) => x.id),
      status: 'released',
      reason: `Lot released by QA; retest by ${retestDate}`,
      signatureId: sig.id,
      userId: user.id,
    });
    await moveLot(trx, {
      lotId,
      to: { status: 'released' },
      set: { retest_date: retestDate, disposition_id: dispositionId },
      now,
      audit: {
        actor: { id: user.id, name: user.fullName },
        action: 'lot.released',
        entityType: 'lot',
        entityId: lotId,
        before: { status: 'quarantine' },
        after: { ...content, status: 'released', dispositionId },
        reason: input.comment ?? null,
        ip,
      },
    });
    await enqueueEvent(trx, 'lot.released', {
      lotNumber: lot.lot_number,
      erpReceiptNumber: lot.erp_receipt_number ?? null,
      material: lot.m_code,
      status: 'released',
      retestDate,
      certificate: c.certificate?.number ?? null,
      decidedAt: now.toISOString(),
    });
  });
  return dispositionView(db, lotId);
}

const REJECTABLE_IDENTITY = new Set(['awaiting-testing', 'passed', 'failed', 'retest-authorised']);

export async function reject(
  db: Knex,
  user: AuthUser,
  lotId: number,
  input: RejectInput,
  ip: string | null,
): Promise<LotDispositionView> {
  const { lot } = await lotRow(db, lotId);
  if (lot.status !== 'quarantine') throw conflict(`Lot ${lot.lot_number} is already ${lot.status}.`);
  if (!REJECTABLE_IDENTITY.has(lot.identity_status))
    throw conflict(
      `A test attempt of lot ${lot.lot_number} is under way (identity status "${lot.identity_status}"); finish or return it first.`,
    );
  if (await db('investigation').where({ lot_id: lotId }).whereNot('status', 'closed').first('id'))
    throw conflict(
      `Lot ${lot.lot_number} has an open investigation; QA decides it there (confirming the failure rejects the lot).`,
    );
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'rejected',
    entityType: 'lot',
    entityId: lotId,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    const row = must(await trx('lot').where({ id: lotId }).forUpdate().first(), `lot ${lot.lot_number}`);
    if (row.status !== 'quarantine') throw conflict(`Lot ${lot.lot_number} is already ${row.status}.`);
    const content = { lot: lot.lot_number, decision: 'rejected', reason: input.reason };
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'rejected',
      entityType: 'lot',
      entityId: lotId,
      content,
      statement: input.reason,
      ip,
    });
    const now = new Date();
    const [dispositionId] = await trx('lot_disposition').insert({
      lot_id: lotId,
      decision: 'rejected',
      reason: input.reason,
      retest_date: null,
      certificate_id: null,
      profile_id: null,
      conditions: '[]',
      signature_id: sig.id,
      decided_by: user.id,
      decided_at: now,
    });
    await setContainerStatus(trx, {
      lotId,
      containerIds: (await trx('container').where({ lot_id: lotId }).select('id')).map((x) => x.id),
      status: 'rejected',
      reason: `Lot rejected by QA: ${input.reason}`.slice(0, 2000),
      signatureId: sig.id,
      userId: user.id,
      onlyWhereAllowed: true,
    });
    await moveLot(trx, {
      lotId,
      to: { status: 'rejected', identityStatus: 'rejected' },
      set: { disposition_id: dispositionId },
      now,
      audit: {
        actor: { id: user.id, name: user.fullName },
        action: 'lot.rejected',
        entityType: 'lot',
        entityId: lotId,
        before: { status: 'quarantine', identityStatus: lot.identity_status },
        after: { status: 'rejected', identityStatus: 'rejected', dispositionId },
        reason: input.reason,
        ip,
      },
    });
    await enqueueEvent(trx, 'lot.rejected', {
      lotNumber: lot.lot_number,
      erpReceiptNumber: lot.erp_receipt_number ?? null,
      material: lot.m_code,
      status: 'rejected',
      reason: input.reason,
      decidedAt: now.toISOString(),
    });
  });
  return dispositionView(db, lotId);
}

/** Lots whose disposition QA has to decide: in quarantine, identity passed, or (material not identified by IR) sampled. */
export async function lotsAwaitingDisposition(db: Db) {
  const latestIr = db('material_ir_suitability').max('id').groupBy('material_id');
  return db('lot as l')
    .join('material as m', 'm.id', 'l.material_id')
    .where('l.status', 'quarantine')
    .where((w) =>
      w.where('l.identity_status', 'passed').orWhere((x) =>
        // a material whose identity is not tested by IR: sampled, awaiting the replacing test's result and QA
        x
          .where('l.identity_status', 'awaiting-testing')
          .whereExists(
            db('material_ir_suitability as s')
              .whereRaw('s.material_id = l.material_id')
              .where('s.suitable', 0)
              .whereIn('s.id', latestIr),
          )
          .where((y) =>
            y.whereNull('l.sampling_plan').orWhereExists(db('sampling_record as r').whereRaw('r.lot_id = l.id')),
          ),
      ),
    )
    .select<(Pick<LotRow, 'id' | 'lot_number' | 'received_date'> & { m_name: MaterialRow['name'] })[]>(
      'l.id',
      'l.lot_number',
      'm.name as m_name',
      'l.received_date',
    )
    .orderBy('l.id');
}

/** Released lots whose retest date falls within `days` days (or has passed). */
export async function retestsDue(db: Db, days = 30) {
  const until = new Date(Date.now() + days * 86_400_000).toISOString().slice(0, 10);
  return db('lot as l')
    .join('material as m', 'm.id', 'l.material_id')
    .where('l.status', 'released')
    .whereNotNull('l.retest_date')
    .where('l.retest_date', '<=', until)
    .select<
      (Pick<LotRow, 'id' | 'lot_number'> & {
        retest_date: NonNullable<LotRow['retest_date']>; // whereNotNull above
        m_name: MaterialRow['name'];
      })[]
    >('l.id', 'l.lot_number', 'm.name as m_name', 'l.retest_date')
    .orderBy('l.retest_date');
}
