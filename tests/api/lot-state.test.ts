/**
 * The lot and container state machine on the real database (server/modules/lots/state.ts;
 * docs/architecture.md, "The lot and container state machine"): a transition it does not allow is
 * refused with 409 and leaves the lot, its containers and the audit trail as they were; an allowed
 * one is written with its audit event.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SYSTEM_ACTOR } from '../../server/lib/audit';
import { moveLot, setContainerStatus } from '../../server/modules/lots';
import { db } from './helpers';
import { agent, approvedMaterial, FIBRES, receiveLot, retire, type ApprovedMaterial } from './fixtures-testing';

let nylon: ApprovedMaterial;
let operator: Awaited<ReturnType<typeof agent>>;

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 staple fibre', referenceFiles: [FIBRES.nylon66Reference] });
  operator = await agent(['operator']);
});

afterAll(async () => {
  await retire();
});

const auditCount = async (lotId: number) =>
  Number(
    (
      await db()('audit_event')
        .where({ entity_type: 'lot', entity_id: String(lotId) })
        .count({ n: '*' })
    )[0].n,
  );

describe('moveLot', () => {
  it('refuses to pass a lot that was never tested (409) and changes nothing', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 2);
    const before = (await db()('lot').where({ id: lot.id }).first())!;
    const events = await auditCount(lot.id);
    const refused = db().transaction((trx) =>
      moveLot(trx, {
        lotId: lot.id,
        to: { identityStatus: 'passed' },
        audit: { actor: SYSTEM_ACTOR, action: 'lot.identity-passed', entityType: 'lot', entityId: lot.id, ip: null },
      }),
    );
    await expect(refused).rejects.toMatchObject({
      status: 409,
      message: 'A lot whose identity status is awaiting-testing cannot move to passed.',
    });
    const after = (await db()('lot').where({ id: lot.id }).first())!;
    expect(after.identity_status).toBe('awaiting-testing');
    expect(after.updated_at).toEqual(before.updated_at);
    expect(await auditCount(lot.id)).toBe(events);
  });

  it('refuses to release a lot whose identity has not passed (409)', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const refused = db().transaction((trx) =>
      moveLot(trx, { lotId: lot.id, to: { status: 'released' }, audit: { recordedBy: 'lot.released' } }),
    );
    await expect(refused).rejects.toMatchObject({
      status: 409,
      message:
        'Only a lot whose identity passed (or, for a material not identified by IR, whose replacing identity test conforms) can be released.',
    });
    expect((await db()('lot').where({ id: lot.id }).first())!.status).toBe('quarantine');
  });

  it('writes an allowed move together with its audit event', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const events = await auditCount(lot.id);
    const from = await db().transaction((trx) =>
      moveLot(trx, {
        lotId: lot.id,
        to: { identityStatus: 'testing' },
        audit: {
          actor: SYSTEM_ACTOR,
          action: 'lot.identity-status-changed',
          entityType: 'lot',
          entityId: lot.id,
          before: { identityStatus: 'awaiting-testing' },
          after: { identityStatus: 'testing' },
          ip: null,
        },
      }),
    );
    expect(from).toEqual({ status: 'quarantine', identityStatus: 'awaiting-testing' });
    expect((await db()('lot').where({ id: lot.id }).first())!.identity_status).toBe('testing');
    expect(await auditCount(lot.id)).toBe(events + 1);
  });
});

describe('setContainerStatus', () => {
  it('refuses to return a sampled container to quarantine (409) and stores no status row', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 2);
    const [c] = lot.containers;
    const rows = async () => (await db()('container_status').where({ container_id: c.id })).length;
    const before = await rows();
    const refused = db().transaction((trx) =>
      setContainerStatus(trx, { lotId: lot.id, containerIds: [c.id], status: 'quarantine', userId: null }),
    );
    await expect(refused).rejects.toMatchObject({
      status: 409,
      message: 'A container that is sampled cannot become quarantine.',
    });
    expect(await rows()).toBe(before);
  });

  it('refuses a retest move of containers whose lot was not returned to quarantine by a retest (409)', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const [c] = lot.containers;
    const rows = async () => (await db()('container_status').where({ container_id: c.id })).length;
    const before = await rows();
    const refused = db().transaction((trx) =>
      setContainerStatus(trx, { lotId: lot.id, containerIds: [c.id], status: 'sampled', userId: null, retest: true }),
    );
    await expect(refused).rejects.toMatchObject({
      status: 409,
      message: 'Containers go back under test only after the lot was returned to quarantine by a retest.',
    });
    expect(await rows()).toBe(before);
  });
});
