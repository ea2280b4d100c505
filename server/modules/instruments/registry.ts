/**
 * The instrument registry: instruments as master data (created and changed by QA, audited with a
 * reason), listed with their check state.
 */
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import { toSignatureRecord } from '../../lib/esign';
import { conflict, notFound } from '../../lib/errors';
import * as repo from './repo';
import { must } from '../../lib/db';
import type { InstrumentInsert } from '../../lib/db-tables';
import type { InstrumentCreate, InstrumentDetail, InstrumentListItem, InstrumentUpdate } from './contract';

import { statusOf } from './checks';
import { lifecycleOf } from './lifecycle';
import { DEFAULT_SPEC_JUSTIFICATION, pharmacopoeiaBands } from './specifications';
import { transactionWithRetry } from '../../lib/retry';

export async function listInstruments(db: Knex): Promise<InstrumentListItem[]> {
  const rows = await db('instrument').orderBy('name');
  const now = new Date();
  return Promise.all(rows.map(async (r) => ({ ...repo.toInstrument(r), ...(await statusOf(db, r, now)) })));
}

export async function getInstrument(db: Knex, id: number): Promise<InstrumentDetail> {
  const i = await repo.findInstrument(db, id);
  if (!i) throw notFound('The instrument');
  const specs = await repo.specsOf(db, id);
  const checks = await repo.checksOf(db, id);
  const sigIds = [...specs.map((s) => s.approved_signature_id), ...checks.map((c) => c.signature_id)].filter(
    (x): x is number => !!x,
  );
  // A plain copy of each row: toSignatureRecord (server/lib/esign.ts) takes a record of columns.
  const sigs = sigIds.length
    ? (await db('e_signature').whereIn('id', sigIds)).map((s) => toSignatureRecord({ ...s }))
    : [];
  const users = await db('app_user')
    .whereIn('id', [...new Set([...checks.map((c) => c.performed_by), ...specs.map((s) => s.created_by)]), 0])
    .select('id', 'full_name');
  const name = (uid: number) => users.find((u) => u.id === uid)?.full_name ?? null;
  return {
    ...repo.toInstrument(i),
    ...(await statusOf(db, i, new Date())),
    specs: specs.map((s) => ({
      ...repo.toSpec(s),
      createdByName: name(s.created_by),
      signature: sigs.find((x) => x.id === s.approved_signature_id) ?? null,
    })),
    checks: checks.map((c) => ({
      ...repo.toCheck(c),
      performedByName: name(c.performed_by),
      signature: sigs.find((x) => x.id === c.signature_id) ?? null,
    })),
    ...(await lifecycleOf(db, id)),
  };
}

export async function createInstrument(
  db: Knex,
  actor: Actor,
  input: InstrumentCreate,
  ip: string | null,
): Promise<InstrumentDetail> {
  if (await db('instrument').where({ name: input.name }).first())
    throw conflict(`An instrument named "${input.name}" already exists.`);
  const id = await transactionWithRetry(db, async (trx) => {
    const now = new Date();
    const [id] = await trx('instrument').insert({
      name: input.name,
      serial_number: input.serialNumber,
      technique: input.technique,
      sampling: input.sampling,
      location: input.location ?? '',
      check_validity_hours: input.checkValidityHours ?? 24,
      active: 1,
      created_by: actor.id!,
      created_at: now,
      updated_at: now,
    });
    const inst = repo.toInstrument(must(await repo.findInstrument(trx, id), `instrument ${id} just inserted`));
    await appendAudit(trx, {
      actor,
      action: 'instrument.created',
      entityType: 'instrument',
      entityId: id,
      after: inst,
      reason: input.reason ?? null,
      ip,
    });
    if (input.technique === 'mid-ir') {
      const bands = pharmacopoeiaBands('pharmacopoeia-ft');
      const [specId] = await trx('instrument_check_spec').insert({
        instrument_id: id,
        version: 1,
        kind: 'pharmacopoeia-ft',
        bands: JSON.stringify(bands),
        justification: DEFAULT_SPEC_JUSTIFICATION,
        status: 'approved',
        created_by: actor.id!,
        created_at: now,
        approved_signature_id: null,
      });
      await appendAudit(trx, {
        actor,
        action: 'instrument.spec-adopted',
        entityType: 'instrument_check_spec',
        entityId: specId,
        after: { instrumentId: id, version: 1, kind: 'pharmacopoeia-ft', bands, status: 'approved' },
        reason: DEFAULT_SPEC_JUSTIFICATION,
        ip,
      });
    }
    return id;
  });
  return getInstrument(db, id);
}

export async function updateInstrument(
  db: Knex,
  actor: Actor,
  id: number,
  patch: InstrumentUpdate,
  ip: string | null,
): Promise<InstrumentDetail> {
  await transactionWithRetry(db, async (trx) => {
    const before = await trx('instrument').where({ id }).forUpdate().first();
    if (!before) throw notFound('The instrument');
    const upd: Partial<InstrumentInsert> = { updated_at: new Date() };
    if (patch.name !== undefined) upd.name = patch.name;
    if (patch.serialNumber !== undefined) upd.serial_number = patch.serialNumber;
    if (patch.sampling !== undefined) upd.sampling = patch.sampling;
    if (patch.location !== undefined) upd.location = patch.location;
    if (patch.checkValidityHours !== undefined) upd.check_validity_hours = patch.checkValidityHours;
    if (patch.active !== undefined) upd.active = patch.active ? 1 : 0;
    await trx('instrument').where({ id }).update(upd);
    const after = must(await repo.findInstrument(trx, id), `instrument ${id} just updated`);
    await appendAudit(trx, {
      actor,
      action: 'instrument.updated',
      entityType: 'instrument',
      entityId: id,
      before: repo.toInstrument(before),
      after: repo.toInstrument(after),
      reason: patch.reason,
      ip,
    });
  });
  return getInstrument(db, id);
}
