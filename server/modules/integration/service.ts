/**
 * ERP/LIMS link (issue 14 item 6): machine accounts (administrator), webhook endpoints
 * (administrator), the ERP's goods receipt and its reading of results (machine accounts).
 */
import crypto from 'node:crypto';
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import type { LotRow } from '../../lib/db-tables';
import { AppError, conflict, notFound } from '../../lib/errors';
import type { AuthUser, MachineUser } from '../../lib/http';
import { getLotDetail } from '../lot-record';
import { receiveLot } from '../lots';
import type {
  ErpLotView,
  ErpReceipt,
  MachineAccountCreated,
  MachineAccountRecord,
  MachineScope,
  WebhookDeliveryRecord,
  WebhookEndpointCreated,
  WebhookEndpointRecord,
  WebhookEvent,
} from './contract';
import { hashToken, newToken } from './tokens';
import { transactionWithRetry } from '../../lib/retry';

const person = (u: AuthUser): Actor => ({ id: u.id, name: u.fullName });

export async function listMachineAccounts(db: Db): Promise<MachineAccountRecord[]> {
  const rows = await db('machine_account as a')
    .join('app_user as u', 'u.id', 'a.created_by')
    .orderBy('a.id')
    .select('a.*', 'u.full_name as u_name');
  return rows.map((r) => ({
    id: r.id,
    name: r.name,
    scopes: parseJson<MachineScope[]>(r.scopes, []),
    tokenHint: r.token_hint,
    createdBy: { id: r.created_by, name: r.u_name },
    createdAt: new Date(r.created_at).toISOString(),
    lastUsedAt: r.last_used_at ? new Date(r.last_used_at).toISOString() : null,
    revokedAt: r.revoked_at ? new Date(r.revoked_at).toISOString() : null,
    revokeReason: r.revoke_reason,
  }));
}

export async function createMachineAccount(
  db: Knex,
  user: AuthUser,
  input: { name: string; scopes: MachineScope[]; reason: string },
  ip: string | null,
): Promise<MachineAccountCreated> {
  if (await db('machine_account').where({ name: input.name }).first('id'))
    throw conflict(`A machine account named "${input.name}" exists already.`);
  const token = newToken();
  const scopes = [...new Set(input.scopes)].sort();
  const id = await transactionWithRetry(db, async (trx) => {
    const [id] = await trx('machine_account').insert({
      name: input.name,
      scopes: JSON.stringify(scopes),
      token_hash: hashToken(token),
      token_hint: token.slice(0, 8),
      created_by: user.id,
      created_at: new Date(),
    });
    await appendAudit(trx, {
      actor: person(user),
      action: 'machine.account-created',
      entityType: 'machine_account',
      entityId: id,
      after: { name: input.name, scopes, tokenHint: token.slice(0, 8) },
      reason: input.reason,
      ip,
    });
    return id;
  });
  const rec = (await listMachineAccounts(db)).find((a) => a.id === id)!;
  return { ...rec, token };
}

export async function revokeMachineAccount(
  db: Knex,
  user: AuthUser,
  id: number,
  reason: string,
  ip: string | null,
): Promise<MachineAccountRecord> {
  await transactionWithRetry(db, async (trx) => {
    const row = await trx('machine_account').where({ id }).forUpdate().first();
    if (!row) throw notFound('The machine account');
    if (row.revoked_at) throw conflict(`The token of ${row.name} is revoked already.`);
    await trx('machine_account')
      .where({ id })
      .update({ revoked_at: new Date(), revoked_by: user.id, revoke_reason: reason });
    await appendAudit(trx, {
      actor: person(user),
      action: 'machine.account-revoked',
      entityType: 'machine_account',
      entityId: id,
      before: { revoked: false },
      after: { revoked: true },
      reason,
      ip,
    });
  });
  return (await listMachineAccounts(db)).find((a) => a.id === id)!;
}

export async function listEndpoints(db: Db): Promise<WebhookEndpointRecord[]> {
  const rows = await db('webhook_endpoint as e')
    .join('app_user as u', 'u.id', 'e.created_by')
    .orderBy('e.id')
    .select('e.*', 'u.full_name as u_name');
  const counts = await db('webhook_delivery')
    .groupBy('endpoint_id', 'status')
    .select('endpoint_id', 'status')
    .count({ n: '*' });
  return rows.map((r) => {
    const c = (s: string) => Number(counts.find((x) => x.endpoint_id === r.id && x.status === s)?.n ?? 0);
    return {
      id: r.id,
      name: r.name,
      url: r.url,
      events: parseJson<WebhookEvent[]>(r.events, []),
      createdBy: { id: r.created_by, name: r.u_name },
      createdAt: new Date(r.created_at).toISOString(),
      deactivatedAt: r.deactivated_at ? new Date(r.deactivated_at).toISOString() : null,
      deliveries: { pending: c('pending'), delivered: c('delivered'), failed: c('failed') },
    };
  });
}

export async function createEndpoint(
  db: Knex,
  user: AuthUser,
  input: { name: string; url: string; events: WebhookEvent[] },
  ip: string | null,
): Promise<WebhookEndpointCreated> {
  const secret = `whsec_${crypto.randomBytes(24).toString('base64')}`;
  const events = [...new Set(input.events)].sort();
  const id = await transactionWithRetry(db, async (trx) => {
    const [id] = await trx('webhook_endpoint').insert({
      name: input.name,
      url: input.url,
      secret,
      events: JSON.stringify(events),
      created_by: user.id,
      created_at: new Date(),
    });
    await appendAudit(trx, {
      actor: person(user),
      action: 'webhook.endpoint-created',
      entityType: 'webhook_endpoint',
      entityId: id,
      after: { name: input.name, url: input.url, events },
      ip,
    });
    return id;
  });
  const rec = (await listEndpoints(db)).find((e) => e.id === id)!;
  return { ...rec, secret };
}

export async function deactivateEndpoint(db: Knex, user: AuthUser, id: number, ip: string | null) {
  await transactionWithRetry(db, async (trx) => {
    const row = await trx('webhook_endpoint').where({ id }).forUpdate().first();
    if (!row) throw notFound('The webhook endpoint');
    if (row.deactivated_at) throw conflict(`${row.name} is deactivated already.`);
    await trx('webhook_endpoint').where({ id }).update({ deactivated_at: new Date(), deactivated_by: user.id });
    await appendAudit(trx, {
      actor: person(user),
      action: 'webhook.endpoint-deactivated',
      entityType: 'webhook_endpoint',
      entityId: id,
      before: { active: true },
      after: { active: false },
      ip,
    });
  });
  return (await listEndpoints(db)).find((e) => e.id === id)!;
}

export async function listDeliveries(db: Db, limit = 200): Promise<WebhookDeliveryRecord[]> {
  const rows = await db('webhook_delivery as d')
    .join('webhook_endpoint as e', 'e.id', 'd.endpoint_id')
    .orderBy('d.id', 'desc')
    .limit(limit)
    .select('d.*', 'e.name as e_name');
  return rows.map((r) => ({
    id: r.id,
    endpointId: r.endpoint_id,
    endpointName: r.e_name,
    messageId: r.message_id,
    eventType: r.event_type,
    status: r.status,
    attempts: r.attempts,
    nextAttemptAt: r.status === 'pending' ? new Date(r.next_attempt_at).toISOString() : null,
    lastStatusCode: r.last_status_code,
    lastError: r.last_error,
    createdAt: new Date(r.created_at).toISOString(),
    deliveredAt: r.delivered_at ? new Date(r.delivered_at).toISOString() : null,
  }));
}

/** What the ERP reads of a lot. */
export async function erpLotView(db: Db, lotId: number): Promise<ErpLotView> {
  const lot = await getLotDetail(db as Knex, lotId);
  const row = await db('lot').where({ id: lotId }).first('retest_date');
  return {
    lotNumber: lot.lotNumber,
    erpReceiptNumber: lot.erpReceiptNumber,
    material: { code: lot.material.code, name: lot.material.name },
    supplierLot: lot.supplierLot,
    containerCount: lot.containerCount,
    status: lot.status,
    identityStatus: lot.identityStatus,
    certificate: lot.certificate.state === 'issued' ? lot.certificate.number : null,
    retestDate: row?.retest_date ? new Date(row.retest_date).toISOString().slice(0, 10) : null,
    sampling: { plan: lot.source.samplingPlan, sampledContainers: lot.containers.filter((c) => c.sampled).length },
    containers: lot.containers.map((c) => ({
      label: c.label,
      status: c.status,
      identity: c.effective?.verdict ?? null,
    })),
  };
}

export async function erpLotByNumber(db: Db, lotNumber: string): Promise<ErpLotView> {
  const row = await db('lot').where({ lot_number: lotNumber }).first('id');
  if (!row) throw notFound(`Lot ${lotNumber}`);
  return erpLotView(db, row.id);
}

function sameReceipt(
  row: Pick<LotRow, 'material_id' | 'supplier_lot' | 'container_count' | 'received_date'>,
  input: ErpReceipt,
  materialId: number,
): boolean {
  return (
    row.material_id === materialId &&
    row.supplier_lot === input.supplierLot &&
    row.container_count === input.containerCount &&
    new Date(row.received_date).toISOString().slice(0, 10) === input.receivedDate
  );
}

/**
 * The ERP's goods receipt creates the lot, idempotent by the ERP's own receipt number: the same
 * receipt again answers the lot made the first time (200, replayed), a different receipt under a
 * number already used is refused (409). The same supplier-master rules apply as for a person's
 * receipt (blocked source refused and audited, new source = first delivery, sampling plan).
 */
export async function erpReceive(
  db: Knex,
  machine: MachineUser,
  input: ErpReceipt,
  ip: string | null,
  siteTimeZone: string,
): Promise<{ status: 200 | 201; lot: ErpLotView }> {
  const material = await db('material').where({ code: input.materialCode }).first();
  if (!material)
    throw new AppError(422, 'UNKNOWN_MATERIAL', `No material has the code ${input.materialCode} in Drumline.`);
  const existing = await db('lot')
    .where({ erp_account_id: machine.id, erp_receipt_number: input.receiptNumber })
    .first();
  if (existing) {
    if (!sameReceipt(existing, input, material.id))
      throw conflict(
        `Goods receipt ${input.receiptNumber} was already received as lot ${existing.lot_number} with other data; a receipt number is used once.`,
        { lotNumber: existing.lot_number },
      );
    return { status: 200, lot: { ...(await erpLotView(db, existing.id)), replayed: true } };
  }
  const supplier = await db('supplier').where({ code: input.supplierCode }).first();
  if (!supplier)
    throw new AppError(422, 'UNKNOWN_SUPPLIER', `No supplier has the code ${input.supplierCode} in Drumline.`);
  let manufacturerId: number | null = null;
  if (input.manufacturerCode) {
    const m = await db('supplier').where({ code: input.manufacturerCode }).first();
    if (!m)
      throw new AppError(
        422,
        'UNKNOWN_SUPPLIER',
        `No manufacturer has the code ${input.manufacturerCode} in Drumline.`,
      );
    manufacturerId = m.id;
  }
  const actor: Actor = { id: null, name: `ERP interface (machine account ${machine.name})` };
  try {
    const lot = await receiveLot(
      db,
      actor,
      {
        materialId: material.id,
        supplierId: supplier.id,
        manufacturerId,
        supplierLot: input.supplierLot,
        containerCount: input.containerCount,
        receivedDate: input.receivedDate,
        notes: input.notes ?? null,
      },
      ip,
      siteTimeZone,
      { accountId: machine.id, receiptNumber: input.receiptNumber },
    );
    return { status: 201, lot: await erpLotView(db, lot.id) };
  } catch (e) {
    // Two deliveries of the same receipt at once: the unique (account, receipt number) lets one through.
    if ((e as { code?: string }).code === 'ER_DUP_ENTRY') {
      const again = await db('lot')
        .where({ erp_account_id: machine.id, erp_receipt_number: input.receiptNumber })
        .first();
      if (again && sameReceipt(again, input, material.id))
        return { status: 200, lot: { ...(await erpLotView(db, again.id)), replayed: true } };
    }
    throw e;
  }
}
