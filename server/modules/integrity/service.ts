/**
 * The integrity sweep (docs/compliance.md, "Integrity sweep"; issue 12 item 3). Re-hashes every
 * stored file against its SHA-256, every certificate PDF against its SHA-256, every signed record
 * against its signature's content hash (./signatures.ts, the table in server/signature-recipes.ts), and every account's roles against its
 * latest role grant. It runs as a background job once per site under the 'integrity-sweep' lease
 * (daily by default, INTEGRITY_SWEEP_HOURS) and whenever an auditor or QA asks for a run. Downloads
 * and the verifier's review hash the bytes they serve the same way, and verification refuses to
 * sign over a mismatch.
 *
 * A mismatch becomes an alert (append-only, once per subject and found value), audited, mailed to
 * the QA managers, listed in their work queue and shown on the records concerned, until a QA
 * manager signs it off with an e-signature saying what was done. No alert is raised while a counter
 * or the audit head is locked by another write: each alert is its own short transaction.
 */
import { iso } from '../../lib/dates';
import type { Response } from 'express';
import type { Knex } from 'knex';
import { appendAudit, type Actor, SYSTEM_ACTOR } from '../../lib/audit';
import { sha256Hex } from '../../lib/canonical';
import { must, parseJson, type Db } from '../../lib/db';
import type { IntegrityAlertRow, IntegrityRunInsert, IntegrityRunRow, StoredFileRow } from '../../lib/db-tables';
import { sendStoredFile } from '../../lib/files';
import { checkSignatureCredentials, contentHash, recordSignature, toSignatureRecord } from '../../lib/esign';
import { AppError, conflict, notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { acquireLease, startJob, type RunningJob } from '../../lib/lease';
import { enqueueMailToRole } from '../../lib/mail';
import { transactionWithRetry } from '../../lib/retry';
import { grantStanding } from '../../lib/grant-seal';
import { pageLink } from '../../lib/links';
import {
  ALERT_KIND_LABELS,
  type AlertKind,
  type AlertRecord,
  type FoundIn,
  type IntegrityAlert,
  type IntegrityRun,
  type RecordIntegrity,
  type SignOffInput,
} from './contract';
import { alertSignedContent, recipeFor, recipeKey, type SignatureRow } from './signatures';

export const SWEEP_LEASE = 'integrity-sweep';
const FILE_PAGE = 20;
const SIGNATURE_PAGE = 200;

// ---- records an alert is shown on

/** A record in words and the page that shows it. */
async function describeRecord(db: Db, type: string, id: string): Promise<AlertRecord> {
  const n = Number(id);
  switch (type) {
    case 'identity_test': {
      const t = await db('identity_test as t')
        .join('lot as l', 'l.id', 't.lot_id')
        .where('t.id', n)
        .first('t.attempt', 'l.lot_number');
      return {
        type,
        id,
        label: t ? `Test of lot ${t.lot_number}, attempt ${t.attempt}` : `Test ${id}`,
        href: `/tests/${id}/review`,
      };
    }
    case 'reference_spectrum': {
      const r = await db('reference_spectrum').where({ id: n }).first('code');
      return { type, id, label: `Reference ${r?.code ?? id}`, href: `/library/references/${id}` };
    }
    case 'instrument_check': {
      const c = await db('instrument_check as c')
        .join('instrument as i', 'i.id', 'c.instrument_id')
        .where('c.id', n)
        .first('i.id', 'i.name');
      return {
        type,
        id,
        label: `Instrument check ${id} of ${c?.name ?? 'an instrument'}`,
        href: c ? `/instruments/${c.id}` : null,
      };
    }
    case 'instrument_check_spec': {
      const s = await db('instrument_check_spec').where({ id: n }).first('instrument_id', 'version');
      return {
        type,
        id,
        label: `Check specification version ${s?.version ?? '?'}`,
        href: s ? `/instruments/${s.instrument_id}` : null,
      };
    }
    case 'identity_method': {
      const m = await db('identity_method as m')
        .join('material as x', 'x.id', 'm.material_id')
        .where('m.id', n)
        .first('m.version', 'x.code', 'x.id');
      return {
        type,
        id,
        label: `Identity method ${m?.code ?? ''} version ${m?.version ?? '?'}`,
        href: m ? `/library/materials/${m.id}` : null,
      };
    }
    case 'instrument': {
      const i = await db('instrument').where({ id: n }).first('name');
      return { type, id, label: `Instrument ${i?.name ?? id}`, href: `/instruments/${id}` };
    }
    case 'investigation': {
      const i = await db('investigation').where({ id: n }).first('number');
      return { type, id, label: `Investigation ${i?.number ?? id}`, href: `/investigations/${id}` };
    }
    case 'certificate': {
      const c = /^\d+$/.test(id)
        ? await db('certificate').where({ id: n }).first('id', 'number')
        : await db('certificate').where({ number: id }).first('id', 'number');
      return {
        type: 'certificate',
        id: String(c?.id ?? id),
        label: `Certificate ${c?.number ?? id}`,
        href: c ? `/certificates/${c.id}` : null,
      };
    }
    case 'app_user':
    case 'user':
    case 'role_request': {
      const uid = type === 'role_request' ? (await db('role_request').where({ id: n }).first('user_id'))?.user_id : n;
      const u = uid ? await db('app_user').where({ id: uid }).first('username') : null;
      return { type: 'user', id: String(uid ?? id), label: `Account ${u?.username ?? id}`, href: '/admin/users' };
    }
    default:
      return { type, id, label: `${type} ${id}`, href: null };
  }
}

/** Adds the instrument of an instrument check or check specification, so its page shows the alert too. */
async function withParents(db: Db, records: AlertRecord[]): Promise<AlertRecord[]> {
  const out = [...records];
  for (const r of records) {
    const table =
      r.type === 'instrument_check'
        ? 'instrument_check'
        : r.type === 'instrument_check_spec'
          ? 'instrument_check_spec'
          : null;
    if (!table) continue;
    const row = await db(table)
      .where({ id: Number(r.id) })
      .first('instrument_id');
    if (row && !out.some((x) => x.type === 'instrument' && x.id === String(row.instrument_id)))
      out.push(await describeRecord(db, 'instrument', String(row.instrument_id)));
  }
  return out;
}

/** The records that use a stored file (a measurement's test, a reference, an instrument check). */
async function recordsOfFile(db: Knex, fileId: number): Promise<AlertRecord[]> {
  const out: AlertRecord[] = [];
  for (const m of await db('measurement').where({ file_id: fileId }).select('test_id'))
    out.push(await describeRecord(db, 'identity_test', String(m.test_id)));
  for (const r of await db('reference_spectrum').where({ file_id: fileId }).select('id'))
    out.push(await describeRecord(db, 'reference_spectrum', String(r.id)));
  for (const c of await db('instrument_check').where({ file_id: fileId }).select('id'))
    out.push(await describeRecord(db, 'instrument_check', String(c.id)));
  return out;
}

// ---- alerts

export interface Finding {
  kind: AlertKind;
  subjectType: string;
  subjectId: string;
  expected: string;
  found: string;
  summary: string;
  detail?: unknown;
  records: AlertRecord[];
}

export interface FoundBy {
  foundIn: FoundIn;
  user?: { id: number; fullName: string } | null;
  runId?: number | null;
  ip?: string | null;
}

/**
 * Records a mismatch as an alert, once per subject and found value (a second finding of the same
 * mismatch returns the first alert). Its own short transaction: audited, mailed to QA.
 */
export async function raiseAlert(db: Knex, f: Finding, by: FoundBy): Promise<{ id: number; created: boolean }> {
  const key = { kind: f.kind, subject_type: f.subjectType, subject_id: f.subjectId, found: f.found };
  const existing = await db('integrity_alert').where(key).first('id');
  if (existing) return { id: existing.id, created: false };
  try {
    const id = await transactionWithRetry(db, async (trx) => {
      const [alertId] = await trx('integrity_alert').insert({
        ...key,
        expected: f.expected,
        summary: f.summary.slice(0, 2000),
        detail: f.detail === undefined ? null : JSON.stringify(f.detail),
        found_in: by.foundIn,
        found_by: by.user?.id ?? null,
        run_id: by.runId ?? null,
        found_at: new Date(),
      });
      for (const r of await withParents(trx, f.records))
        await trx('integrity_alert_record').insert({
          alert_id: alertId,
          record_type: r.type,
          record_id: r.id,
          label: r.label.slice(0, 200),
        });
      const actor: Actor = by.user ? { id: by.user.id, name: by.user.fullName } : SYSTEM_ACTOR;
      await appendAudit(trx, {
        actor,
        action: 'integrity.mismatch-found',
        entityType: 'integrity_alert',
        entityId: alertId,
        after: {
          kind: f.kind,
          subject: `${f.subjectType} ${f.subjectId}`,
          expected: f.expected,
          found: f.found,
          records: f.records.map((r) => r.label),
          foundIn: by.foundIn,
        },
        reason: f.summary,
        ip: by.ip ?? null,
      });
      await enqueueMailToRole(
        trx,
        'qa_manager',
        `Integrity alert: ${ALERT_KIND_LABELS[f.kind]}`,
        [
          f.summary,
          `Records: ${f.records.map((r) => r.label).join('; ') || '(none found)'}`,
          `Expected ${f.expected}, found ${f.found}.`,
          `Found by ${by.foundIn === 'sweep' ? 'the integrity sweep' : `${by.user?.fullName ?? 'Drumline'} (${by.foundIn})`}.`,
          '',
          'Nobody can sign over this record until it is resolved. Review it and sign the alert off:',
          pageLink(`/integrity/alerts/${alertId}`),
        ].join('\n'),
      );
      return alertId;
    });
    return { id, created: true };
  } catch (e) {
    if ((e as { code?: string }).code !== 'ER_DUP_ENTRY') throw e;
    // the duplicate key is the alert already raised for this subject and found value
    const again = await db('integrity_alert').where(key).first('id');
    return { id: must(again, 'The integrity alert found again').id, created: false };
  }
}

function toAlert(
  a: IntegrityAlertRow,
  records: AlertRecord[],
  signOff: IntegrityAlert['signOff'],
  foundByName: string | null,
): IntegrityAlert {
  return {
    id: a.id,
    // kind and found_in are text columns holding the contract's values (raiseAlert writes only those)
    kind: a.kind as AlertKind,
    kindLabel: ALERT_KIND_LABELS[a.kind as AlertKind] ?? a.kind,
    subjectType: a.subject_type,
    subjectId: a.subject_id,
    expected: a.expected,
    found: a.found,
    summary: a.summary,
    foundIn: a.found_in as FoundIn,
    foundBy: foundByName,
    foundAt: new Date(a.found_at).toISOString(),
    records,
    signOff,
  };
}

async function hydrate(db: Knex, rows: IntegrityAlertRow[]): Promise<IntegrityAlert[]> {
  if (!rows.length) return [];
  const ids = rows.map((r) => r.id);
  const recs = await db('integrity_alert_record').whereIn('alert_id', ids).orderBy('id');
  const offs = await db('integrity_signoff as o')
    .join('app_user as u', 'u.id', 'o.signed_by')
    .leftJoin('e_signature as s', 's.id', 'o.signature_id')
    .whereIn('o.alert_id', ids)
    .select(
      'o.*',
      'u.full_name as signer',
      's.id as s_id',
      's.user_id as s_user_id',
      's.printed_name as s_printed_name',
      's.meaning as s_meaning',
      's.signed_at as s_signed_at',
      's.content_hash as s_content_hash',
      's.statement as s_statement',
    );
  const userIds = [...new Set(rows.map((r) => r.found_by).filter((x): x is number => x !== null))];
  const names = new Map(
    userIds.length
      ? (await db('app_user').whereIn('id', userIds).select('id', 'full_name')).map((u) => [u.id, u.full_name])
      : [],
  );
  return Promise.all(
    rows.map(async (a) => {
      const records: AlertRecord[] = [];
      for (const r of recs.filter((x) => x.alert_id === a.id)) {
        const d = await describeRecord(db, r.record_type, r.record_id);
        records.push({ ...d, label: r.label });
      }
      const o = offs.find((x) => x.alert_id === a.id);
      return toAlert(
        a,
        records,
        o
          ? {
              comment: o.comment,
              signedBy: o.signer,
              signedAt: new Date(o.signed_at).toISOString(),
              signature: o.s_id
                ? toSignatureRecord({
                    id: o.s_id,
                    user_id: o.s_user_id,
                    printed_name: o.s_printed_name,
                    meaning: o.s_meaning,
                    signed_at: o.s_signed_at,
                    content_hash: o.s_content_hash,
                    statement: o.s_statement,
                  })
                : null,
            }
          : null,
        a.found_by === null ? null : (names.get(a.found_by) ?? null),
      );
    }),
  );
}

export async function listAlerts(db: Knex, status: 'open' | 'all'): Promise<IntegrityAlert[]> {
  const q = db('integrity_alert as a').select<IntegrityAlertRow[]>('a.*').orderBy('a.id', 'desc').limit(500);
  if (status === 'open') q.whereNotExists(db('integrity_signoff as o').whereRaw('o.alert_id = a.id'));
  return hydrate(db, await q);
}

export async function getAlert(db: Knex, id: number): Promise<IntegrityAlert> {
  const a = await db('integrity_alert').where({ id }).first();
  if (!a) throw notFound('The integrity alert');
  return (await hydrate(db, [a]))[0];
}

/** Alerts shown on one record (open and signed off), newest first. */
export async function alertsOnRecord(db: Knex, type: string, id: number | string): Promise<IntegrityAlert[]> {
  const rows = await db('integrity_alert as a')
    .whereExists(
      db('integrity_alert_record as r')
        .whereRaw('r.alert_id = a.id')
        .andWhere({ 'r.record_type': type, 'r.record_id': String(id) }),
    )
    .select<IntegrityAlertRow[]>('a.*')
    .orderBy('a.id', 'desc');
  return hydrate(db, rows);
}

export async function signOffAlert(db: Knex, user: AuthUser, id: number, input: SignOffInput, ip: string | null) {
  const pre = await db('integrity_alert').where({ id }).first();
  if (!pre) throw notFound('The integrity alert');
  if (await db('integrity_signoff').where({ alert_id: id }).first())
    throw conflict('This alert was already signed off.');
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'integrity-reviewed',
    entityType: 'integrity_alert',
    entityId: id,
    ip,
  });
  const comment = input.comment.trim();
  await transactionWithRetry(db, async (trx) => {
    if (await trx('integrity_signoff').where({ alert_id: id }).forUpdate().first())
      throw conflict('This alert was signed off meanwhile by someone else.');
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'integrity-reviewed',
      entityType: 'integrity_alert',
      entityId: id,
      content: alertSignedContent(pre, comment),
      statement: comment,
      ip,
    });
    await trx('integrity_signoff').insert({
      alert_id: id,
      comment,
      signed_by: user.id,
      signature_id: sig.id,
      signed_at: new Date(),
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'integrity.alert-signed-off',
      entityType: 'integrity_alert',
      entityId: id,
      before: { status: 'open' },
      after: { status: 'signed off', signatureId: sig.id },
      reason: comment,
      ip,
    });
  });
  return getAlert(db, id);
}

// ---- checks

/** What the checks read of a stored file (without its media type and upload columns). */
export type FileRow = Pick<StoredFileRow, 'id' | 'sha256' | 'file_name' | 'size' | 'data'>;

export function fileFinding(
  f: Pick<FileRow, 'id' | 'sha256' | 'file_name' | 'size'>,
  actual: string,
  actualSize: number,
  records: AlertRecord[],
): Finding {
  return {
    kind: 'file-hash',
    subjectType: 'stored_file',
    subjectId: String(f.id),
    expected: f.sha256,
    found: actual,
    summary: `The stored bytes of ${f.file_name} (file ${f.id}) no longer give the SHA-256 recorded when it was uploaded.`,
    detail: { fileName: f.file_name, recordedSize: f.size, actualSize },
    records,
  };
}

/** Re-hashes a stored file; raises an alert on a mismatch. Returns the SHA-256 of the bytes as they are. */
export async function checkFile(db: Knex, f: FileRow, by: FoundBy): Promise<{ actual: string; matches: boolean }> {
  const actual = sha256Hex(f.data);
  const matches = actual === f.sha256;
  if (!matches) await raiseAlert(db, fileFinding(f, actual, f.data.length, await recordsOfFile(db, f.id)), by);
  return { actual, matches };
}

/** A download: hashes the bytes it sends, raises an alert on a mismatch, sends them with both hashes. */
export async function sendCheckedFile(
  db: Knex,
  res: Response,
  f: FileRow & { media_type: string },
  by: FoundBy,
): Promise<void> {
  const { actual } = await checkFile(db, f, by);
  sendStoredFile(res, f, actual);
}

/** A certificate download: the SHA-256 of the PDF bytes sent; raises an alert when it differs from the recorded one. */
export async function checkCertificateBytes(
  db: Knex,
  c: { id: number; number: string; sha256: string },
  pdf: Buffer,
  by: FoundBy,
): Promise<string> {
  const actual = sha256Hex(pdf);
  if (actual !== c.sha256)
    await raiseAlert(
      db,
      {
        kind: 'certificate-hash',
        subjectType: 'certificate',
        subjectId: String(c.id),
        expected: c.sha256,
        found: actual,
        summary: `The stored PDF of certificate ${c.number} no longer gives the SHA-256 recorded when it was issued.`,
        records: [await describeRecord(db, 'certificate', String(c.id))],
      },
      by,
    );
  return actual;
}

/** Re-checks one signature against its record; null when no recipe knows its kind. */
export async function checkSignature(db: Knex, s: SignatureRow, by: FoundBy): Promise<boolean | null> {
  const recipe = recipeFor(recipeKey(s));
  if (!recipe) return null;
  const content = await recipe(db, s);
  const actual = content === undefined ? 'record missing' : contentHash(content);
  if (actual === s.content_hash) return true;
  const record = await describeRecord(db, s.entity_type, s.entity_id);
  await raiseAlert(
    db,
    {
      kind: 'signature-content',
      subjectType: 'e_signature',
      subjectId: String(s.id),
      expected: s.content_hash,
      found: actual,
      summary: `${record.label} no longer matches what was signed "${s.meaning}" (signature ${s.id}): the record was changed after signing.`,
      detail: { meaning: s.meaning, entityType: s.entity_type, entityId: s.entity_id },
      records: [record],
    },
    by,
  );
  return false;
}

// ---- the sweep

async function updateRun(db: Knex, id: number, patch: Partial<IntegrityRunInsert>): Promise<void> {
  await db('integrity_run').where({ id }).update(patch);
}

/** Runs one sweep to its end (renewing the lease while it works). Returns the number of mismatches. */
export async function runSweep(db: Knex, runId: number, leaseMs = 120_000): Promise<number> {
  const by: FoundBy = { foundIn: 'sweep', runId };
  const counts = {
    files_total: Number((await db('stored_file').count({ n: '*' }).first())?.n ?? 0),
    files_checked: 0,
    signatures_total: Number((await db('e_signature').count({ n: '*' }).first())?.n ?? 0),
    signatures_checked: 0,
    certificates_checked: 0,
    accounts_checked: 0,
    mismatches: 0,
  };
  const unchecked: Record<string, number> = {};
  await updateRun(db, runId, { status: 'running', started_at: new Date(), ...counts });
  let lastRenew = Date.now();
  const progress = async () => {
    await updateRun(db, runId, { ...counts });
    if (Date.now() - lastRenew > leaseMs / 3) {
      if (!(await acquireLease(db, SWEEP_LEASE, leaseMs)))
        throw new Error('the sweep lost its lease to another app server');
      lastRenew = Date.now();
    }
  };
  const count = (matches: boolean | null) => {
    if (matches === false) counts.mismatches++;
  };
  try {
    // stored files, a page of rows (bytes included) at a time
    for (let after = 0; ;) {
      const rows: FileRow[] = await db('stored_file')
        .where('id', '>', after)
        .orderBy('id')
        .limit(FILE_PAGE)
        .select('id', 'sha256', 'file_name', 'size', 'data');
      if (!rows.length) break;
      for (const f of rows) {
        count((await checkFile(db, f, by)).matches);
        counts.files_checked++;
        after = f.id;
      }
      await progress();
    }
    // certificates: the stored PDF against its SHA-256
    for (let after = 0; ;) {
      const rows = await db('certificate')
        .where('id', '>', after)
        .orderBy('id')
        .limit(FILE_PAGE)
        .select('id', 'number', 'sha256', 'pdf');
      if (!rows.length) break;
      for (const c of rows) {
        if ((await checkCertificateBytes(db, c, c.pdf, by)) !== c.sha256) counts.mismatches++;
        counts.certificates_checked++;
        after = c.id;
      }
      await progress();
    }
    // signatures against the content of their records
    for (let after = 0; ;) {
      const rows: SignatureRow[] = await db('e_signature').where('id', '>', after).orderBy('id').limit(SIGNATURE_PAGE);
      if (!rows.length) break;
      for (const s of rows) {
        const m = await checkSignature(db, s, by);
        if (m === null) unchecked[recipeKey(s)] = (unchecked[recipeKey(s)] ?? 0) + 1;
        else counts.signatures_checked++;
        count(m);
        after = s.id;
      }
      await progress();
    }
    // accounts: roles against the latest role grant, which must be sealed and linked (server/lib/grant-seal.ts)
    for (const u of await db('app_user').select('id', 'username', 'roles')) {
      const standing = await grantStanding(db, u.id);
      const findings = [
        !standing.ok && {
          expected: `role grant ${standing.grantId} sealed by Drumline and following the account's previous grant`,
          found: standing.why,
          summary: `The latest role grant of account ${u.username} was not written by Drumline: the account holds no role until an administrator grants its roles again.`,
        },
        standing.roles !== u.roles && {
          expected: standing.roles,
          found: String(u.roles),
          summary: `The roles of account ${u.username} differ from its latest role grant.`,
        },
      ].filter((f) => f !== false);
      for (const f of findings) {
        counts.mismatches++;
        const records = [await describeRecord(db, 'user', String(u.id))];
        await raiseAlert(
          db,
          { kind: 'role-grant', subjectType: 'app_user', subjectId: String(u.id), ...f, records },
          by,
        );
      }
      counts.accounts_checked++;
    }
    await updateRun(db, runId, {
      ...counts,
      status: 'finished',
      finished_at: new Date(),
      unchecked: JSON.stringify(unchecked),
    });
    await db.transaction((trx) =>
      appendAudit(trx, {
        actor: SYSTEM_ACTOR,
        action: 'integrity.sweep-finished',
        entityType: 'integrity_run',
        entityId: runId,
        after: { ...counts, unchecked },
      }),
    );
    return counts.mismatches;
  } catch (e) {
    await updateRun(db, runId, {
      ...counts,
      status: 'failed',
      finished_at: new Date(),
      error: String((e as Error).message ?? e).slice(0, 2000),
    }).catch(() => undefined);
    throw e;
  }
}

/** Asks for a sweep (auditor or QA); the background job runs it. Returns the queued or running run. */
export async function requestSweep(db: Knex, user: AuthUser, ip: string | null): Promise<IntegrityRun> {
  const open = await db('integrity_run').whereIn('status', ['queued', 'running']).orderBy('id').first();
  if (open) return toRun(open, null);
  const id = await transactionWithRetry(db, async (trx) => {
    const [id] = await trx('integrity_run').insert({
      origin: 'request',
      requested_by: user.id,
      requested_at: new Date(),
      status: 'queued',
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'integrity.sweep-requested',
      entityType: 'integrity_run',
      entityId: id,
      ip,
    });
    return id;
  });
  return getRun(db, id);
}

function toRun(r: IntegrityRunRow, requestedBy: string | null): IntegrityRun {
  return {
    id: r.id,
    // origin and status are text columns holding the contract's values (this module writes only those)
    origin: r.origin as IntegrityRun['origin'],
    requestedBy,
    requestedAt: new Date(r.requested_at).toISOString(),
    status: r.status as IntegrityRun['status'],
    startedAt: iso(r.started_at),
    finishedAt: iso(r.finished_at),
    filesTotal: r.files_total,
    filesChecked: r.files_checked,
    signaturesTotal: r.signatures_total,
    signaturesChecked: r.signatures_checked,
    certificatesChecked: r.certificates_checked,
    accountsChecked: r.accounts_checked,
    mismatches: r.mismatches,
    unchecked: parseJson<Record<string, number>>(r.unchecked, {}),
    error: r.error ?? null,
  };
}

type RunWithRequester = IntegrityRunRow & { requester: string | null };

export async function getRun(db: Knex, id: number): Promise<IntegrityRun> {
  const r = await db('integrity_run as r')
    .leftJoin('app_user as u', 'u.id', 'r.requested_by')
    .where('r.id', id)
    .first<RunWithRequester | undefined>('r.*', 'u.full_name as requester');
  if (!r) throw notFound('The integrity sweep');
  return toRun(r, r.requester ?? null);
}

export async function listRuns(db: Knex): Promise<IntegrityRun[]> {
  const rows = await db('integrity_run as r')
    .leftJoin('app_user as u', 'u.id', 'r.requested_by')
    .orderBy('r.id', 'desc')
    .limit(20)
    .select<RunWithRequester[]>('r.*', 'u.full_name as requester');
  return rows.map((r) => toRun(r, r.requester ?? null));
}

/**
 * One tick of the background job (under the lease): a queued run first; otherwise a scheduled run
 * when the last finished one is older than `everyHours`. Returns the run it ran, or null.
 */
export async function sweepTick(db: Knex, everyHours: number, leaseMs?: number): Promise<number | null> {
  let run = await db('integrity_run').where({ status: 'queued' }).orderBy('id').first('id');
  if (!run) {
    // a run left 'running' by a process that died is finished as failed; the next tick starts afresh
    await db('integrity_run')
      .where({ status: 'running' })
      .update({ status: 'failed', finished_at: new Date(), error: 'interrupted (the app server running it stopped)' });
    if (everyHours <= 0) return null;
    const last = await db('integrity_run')
      .whereIn('status', ['finished', 'failed'])
      .orderBy('id', 'desc')
      .first('finished_at');
    if (last?.finished_at && Date.now() - new Date(last.finished_at).getTime() < everyHours * 3600_000) return null;
    const [id] = await db('integrity_run').insert({ origin: 'schedule', requested_at: new Date(), status: 'queued' });
    run = { id };
  }
  await runSweep(db, run.id, leaseMs);
  return run.id;
}

let job: RunningJob | null = null;
/** Starts the sweep job in this process (one runner per site through the lease). */
export function startIntegrityJob(db: Knex, everyHours: number, intervalMs = 5000): RunningJob {
  job ??= startJob(db, {
    name: SWEEP_LEASE,
    intervalMs,
    leaseMs: 120_000,
    run: (d) => sweepTick(d, everyHours, 120_000),
  });
  return job;
}

export async function stopIntegrityJob(): Promise<void> {
  await job?.stop();
  job = null;
}

// ---- a record's integrity as its page serves it

/**
 * Hashes the files a test's review shows (the latest measurement of each container, their
 * instrument checks and references) and re-checks the test's signatures; raises alerts for what
 * does not match; returns the result with the alerts on the test.
 */
export async function testIntegrity(db: Knex, testId: number, by: FoundBy): Promise<RecordIntegrity> {
  const ms = await db('measurement')
    .where({ test_id: testId })
    .select('id', 'container_id', 'file_id', 'instrument_check_id', 'reference_ids');
  const latest = new Map<number, (typeof ms)[number]>();
  for (const m of ms)
    if (!latest.get(m.container_id) || latest.get(m.container_id)!.id < m.id) latest.set(m.container_id, m);
  const fileIds = new Set<number>();
  for (const m of latest.values()) {
    fileIds.add(m.file_id);
    const c = await db('instrument_check').where({ id: m.instrument_check_id }).first('file_id');
    if (c) fileIds.add(c.file_id);
    for (const rid of parseJson<number[]>(m.reference_ids, [])) {
      const r = await db('reference_spectrum')
        .where({ id: Number(rid) })
        .first('file_id');
      if (r) fileIds.add(r.file_id);
    }
  }
  const files: RecordIntegrity['files'] = [];
  for (const id of [...fileIds].sort((a, b) => a - b)) {
    const f: FileRow | undefined = await db('stored_file')
      .where({ id })
      .first('id', 'sha256', 'file_name', 'size', 'data');
    if (!f) continue;
    const { actual, matches } = await checkFile(db, f, by);
    files.push({ fileId: f.id, name: f.file_name, storedSha256: f.sha256, actualSha256: actual, matches });
  }
  const signatures: RecordIntegrity['signatures'] = [];
  for (const s of await db('e_signature')
    .where({ entity_type: 'identity_test', entity_id: String(testId) })
    .orderBy('id'))
    signatures.push({ signatureId: s.id, meaning: s.meaning, matches: await checkSignature(db, s, by) });
  const alerts = await alertsOnRecord(db, 'identity_test', testId);
  const intact =
    files.every((f) => f.matches) &&
    signatures.every((s) => s.matches !== false) &&
    alerts.every((a) => a.signOff !== null);
  return { files, signatures, alerts, intact };
}

/** The verifier's guard: refuses to sign over a mismatch (fresh, or an alert QA has not signed off). */
export async function assertTestIntact(db: Knex, testId: number, user: AuthUser, ip: string | null): Promise<void> {
  const r = await testIntegrity(db, testId, { foundIn: 'verification', user, ip });
  const bad = [
    ...r.files.filter((f) => !f.matches).map((f) => `the file ${f.name} no longer matches its SHA-256`),
    ...r.signatures
      .filter((s) => s.matches === false)
      .map((s) => `the record no longer matches its "${s.meaning}" signature`),
  ];
  if (bad.length)
    throw new AppError(
      409,
      'INTEGRITY_MISMATCH',
      `Nothing was signed: ${bad.join('; ')}. QA has been alerted; the test cannot be verified over data that changed after they were recorded.`,
      r,
    );
  const open = r.alerts.filter((a) => a.signOff === null);
  if (open.length)
    throw new AppError(
      409,
      'INTEGRITY_ALERT_OPEN',
      `Nothing was signed: integrity alert ${open.map((a) => a.id).join(', ')} on this test is still open. QA reviews and signs it off first.`,
      r,
    );
}
