/**
 * Retest of a released lot (issue 14 item 5). The work queue lists released lots whose retest
 * date is near; a QA manager starts the retest with a reason and an e-signature (meaning
 * "retest-started"). In one transaction the lot goes back to quarantine with identity "awaiting
 * testing", its containers go back under test, the retest is recorded (lot_retest, append-only,
 * naming the release it reopens), audited, and the ERP is told (webhook "lot.retest-started").
 * The operator then starts a new attempt, which always takes the material's CURRENT approved
 * method version (server/modules/testing/service.ts, startTest); its outcome goes through
 * verification, a new identity certificate (superseding the earlier one) and QA's disposition
 * again. The database refuses a released lot back in quarantine without such a record
 * (db/migrations/145_retest.ts).
 */
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import { must, type Db } from '../../lib/db';
import type { AppUserRow, LotRetestRow, LotRow, MaterialRow } from '../../lib/db-tables';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { conflict, notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { transactionWithRetry } from '../../lib/retry';
import { enqueueEvent } from '../../lib/webhook-outbox';
import { moveLot, setContainerStatus } from '../lots';
import { sampledContainerIds } from '../sampling';
import type { RetestInput, RetestRecord } from './contract';

const isoDate = (d: Date | null) => (d ? new Date(d).toISOString().slice(0, 10) : null);

/** The signed content of a retest start (rebuilt by the integrity sweep, server/signature-recipes.ts). */
export function retestSignedContent(r: {
  lotNumber: string;
  reopenedDispositionId: number;
  retestDateDue: string | null;
  reason: string;
}) {
  return {
    lot: r.lotNumber,
    decision: 'retest',
    reopens: r.reopenedDispositionId,
    retestDateDue: r.retestDateDue,
    reason: r.reason,
  };
}

export async function retestsOf(db: Db, lotId: number): Promise<RetestRecord[]> {
  const rows = await db('lot_retest as r')
    .join('app_user as u', 'u.id', 'r.started_by')
    .where('r.lot_id', lotId)
    .orderBy('r.id')
    .select<(LotRetestRow & { u_name: AppUserRow['full_name'] })[]>('r.*', 'u.full_name as u_name');
  if (!rows.length) return [];
  const sigs = await signaturesFor(db, 'lot', lotId);
  return rows.map((r) => ({
    id: r.id,
    reopenedDispositionId: r.reopened_disposition_id,
    retestDateDue: isoDate(r.retest_date_due),
    reason: r.reason,
    startedBy: { id: r.started_by, name: r.u_name },
    startedAt: new Date(r.started_at).toISOString(),
    signature: sigs.find((s) => s.id === r.signature_id) ?? null,
  }));
}

/** The newest retest of a lot, or undefined. */
export async function latestRetest(db: Db, lotId: number): Promise<{ id: number; started_at: Date } | undefined> {
  return db('lot_retest').where({ lot_id: lotId }).orderBy('id', 'desc').first('id', 'started_at');
}

export async function startRetest(
  db: Knex,
  user: AuthUser,
  lotId: number,
  input: RetestInput,
  ip: string | null,
): Promise<void> {
  const lot = await db('lot as l')
    .join('material as m', 'm.id', 'l.material_id')
    .where('l.id', lotId)
    .first<(LotRow & { m_code: MaterialRow['code'] }) | undefined>('l.*', 'm.code as m_code');
  if (!lot) throw notFound('The lot');
  if (lot.status !== 'released')
    throw conflict(
      `Lot ${lot.lot_number} is ${lot.status}; only a released lot is retested. A lot in quarantine is tested through its own attempts.`,
    );
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'retest-started',
    entityType: 'lot',
    entityId: lotId,
    ip,
  });
  const sampled = await sampledContainerIds(db, lotId);
  await transactionWithRetry(db, async (trx) => {
    const row = must(await trx('lot').where({ id: lotId }).forUpdate().first(), `lot ${lot.lot_number}`);
    if (row.status !== 'released') throw conflict(`Lot ${lot.lot_number} is ${row.status}; it was changed meanwhile.`);
    // a release always records its disposition (lots' state machine, `moveLot` with `disposition_id`)
    const dispositionId = must(row.disposition_id ?? undefined, `disposition of released lot ${lot.lot_number}`);
    const retestDateDue = isoDate(row.retest_date);
    const content = retestSignedContent({
      lotNumber: lot.lot_number,
      reopenedDispositionId: dispositionId,
      retestDateDue,
      reason: input.reason,
    });
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'retest-started',
      entityType: 'lot',
      entityId: lotId,
      content,
      statement: input.reason,
      ip,
    });
    const now = new Date();
    const [retestId] = await trx('lot_retest').insert({
      lot_id: lotId,
      reopened_disposition_id: dispositionId,
      retest_date_due: row.retest_date,
      reason: input.reason,
      signature_id: sig.id,
      started_by: user.id,
      started_at: now,
    });
    // the state machine checks the move against the retest record just written (as the lot guard does)
    await moveLot(trx, {
      lotId,
      to: { status: 'quarantine', identityStatus: 'awaiting-testing' },
      now,
      audit: { recordedBy: 'lot.retest-started' },
    });
    const all = (await trx('container').where({ lot_id: lotId }).select('id')).map((x) => x.id);
    const underTest = sampled ? all.filter((id) => sampled.includes(id)) : all;
    const rest = all.filter((id) => !underTest.includes(id));
    const reason = `Retest of the lot started by QA: ${input.reason}`.slice(0, 2000);
    await setContainerStatus(trx, {
      lotId,
      containerIds: underTest,
      status: 'sampled',
      reason,
      signatureId: sig.id,
      userId: user.id,
      retest: true,
      audit: { recordedBy: 'lot.retest-started' },
    });
    if (rest.length)
      await setContainerStatus(trx, {
        lotId,
        containerIds: rest,
        status: 'quarantine',
        reason,
        signatureId: sig.id,
        userId: user.id,
        retest: true,
        audit: { recordedBy: 'lot.retest-started' },
      });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'lot.retest-started',
      entityType: 'lot',
      entityId: lotId,
      before: { status: 'released', identityStatus: row.identity_status, retestDate: retestDateDue },
      after: { ...content, status: 'quarantine', identityStatus: 'awaiting-testing', retestId },
      reason: input.reason,
      ip,
    });
    await enqueueEvent(trx, 'lot.retest-started', {
      lotNumber: lot.lot_number,
      erpReceiptNumber: lot.erp_receipt_number ?? null,
      material: lot.m_code,
      status: 'quarantine',
      retestDateDue,
      reason: input.reason,
      startedAt: now.toISOString(),
    });
  });
}
