/**
 * The audit table is append-only in the database itself, and the hash chain exposes a change
 * made behind the application's back (issue 2; 21 CFR 11.10(e); EU GMP Annex 11 §9).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentFor, db, ownerDb, sig, untyped } from './helpers';
import { appendAudit, verifyChain } from '../../server/lib/audit';

const owner = ownerDb();
afterAll(() => owner.destroy());
beforeAll(async () => {
  // at least one event, so that the statements below have rows to touch
  await db().transaction((trx) =>
    appendAudit(trx, { actor: { id: null, name: 'test' }, action: 'test.seed', entityType: 'test', entityId: 0 }),
  );
});

describe('append-only audit table (runtime account)', () => {
  // The runtime account lacks the privilege (errno 1142); even the owner account is stopped by the triggers (errno 1644).
  it('rejects UPDATE', async () => {
    await expect(
      untyped(db(), 'audit_event').update({ reason: 'rewritten' }).where('id', '>', 0),
    ).rejects.toMatchObject({
      errno: 1142,
    });
    await expect(
      untyped(owner, 'audit_event').update({ reason: 'rewritten' }).where('id', '>', 0),
    ).rejects.toMatchObject({
      errno: 1644,
    });
  });
  it('rejects DELETE', async () => {
    await expect(db()('audit_event').delete().where('id', '>', 0)).rejects.toMatchObject({ errno: 1142 });
    await expect(owner('audit_event').delete().where('id', '>', 0)).rejects.toMatchObject({ errno: 1644 });
  });
  it('rejects TRUNCATE (no privilege)', async () => {
    await expect(db().raw('TRUNCATE TABLE audit_event')).rejects.toMatchObject({ code: 'ER_TABLEACCESS_DENIED_ERROR' });
  });
  it('cannot drop the trigger that protects it', async () => {
    await expect(db().raw('DROP TRIGGER audit_event_no_update')).rejects.toThrow(/denied/i);
  });
  it('also protects signatures', async () => {
    await expect(db()('e_signature').delete().where('id', '>', 0)).rejects.toThrow();
  });
});

describe('hash chain', () => {
  it('is intact after normal work, and the check reports the first altered event after tampering', async () => {
    const { agent } = await agentFor(['auditor']);
    await db().transaction((trx) =>
      appendAudit(trx, {
        actor: { id: null, name: 'test' },
        action: 'test.event',
        entityType: 'test',
        entityId: 1,
        after: { a: 1 },
        reason: 'original',
      }),
    );
    const ok = await agent.get('/api/audit/verify');
    expect(ok.status).toBe(200);
    expect(ok.body.ok).toBe(true);
    expect(ok.body.events).toBeGreaterThan(0);
    expect(ok.body.lastHash).toMatch(/^[0-9a-f]{64}$/);

    // Tamper with a privileged account: drop the trigger, change one reason, restore the trigger.
    const target = (await db()('audit_event').where({ action: 'test.event' }).first())!;
    await owner.raw('DROP TRIGGER audit_event_no_update');
    try {
      await untyped(owner, 'audit_event').where({ id: target.id }).update({ reason: 'quietly rewritten' });
    } finally {
      await owner.raw(
        "CREATE TRIGGER audit_event_no_update BEFORE UPDATE ON audit_event FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit_event is append-only'",
      );
    }
    const broken = await agent.get('/api/audit/verify');
    expect(broken.body.ok).toBe(false);
    expect(broken.body.brokenAt).toBe(Number(target.id));
    expect(broken.body.problem).toMatch(/altered/);

    // Put it back so later tests in this run see an intact chain.
    await owner.raw('DROP TRIGGER audit_event_no_update');
    try {
      await untyped(owner, 'audit_event').where({ id: target.id }).update({ reason: 'original' });
    } finally {
      await owner.raw(
        "CREATE TRIGGER audit_event_no_update BEFORE UPDATE ON audit_event FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit_event is append-only'",
      );
    }
    expect((await verifyChain(db())).ok).toBe(true);
  });

  it('concurrent appends keep one unbroken chain', async () => {
    await Promise.all(
      Array.from({ length: 20 }, (_, i) =>
        db().transaction((trx) =>
          appendAudit(trx, {
            actor: { id: null, name: 'test' },
            action: 'test.parallel',
            entityType: 'test',
            entityId: i,
          }),
        ),
      ),
    );
    const report = await verifyChain(db());
    expect(report.ok).toBe(true);
  });
});

describe('user administration is audited with before and after values', () => {
  it('records a role change with old and new roles and the reason', async () => {
    const { agent: admin } = await agentFor(['admin']);
    const { agent: second, user: secondAdmin } = await agentFor(['admin']);
    const created = await admin.post('/api/users').send({
      username: `rolechg${Date.now() % 100000}`,
      fullName: 'Role Change',
      email: 'rc@test.example',
      roles: ['operator'],
      temporaryPassword: 'temporary-password-1',
    });
    expect(created.status).toBe(201);
    const id = created.body.id;
    const upd = await admin
      .patch(`/api/users/${id}`)
      .send({ roles: ['operator', 'verifier'], reason: 'trained as verifier' });
    expect(upd.status).toBe(200);
    // verifier is granted when a second administrator confirms (docs/access.md, two-person rule)
    const confirmed = await second
      .post(`/api/users/role-changes/${upd.body.pendingRoleChange.requestId}/confirm`)
      .send({ signature: sig(secondAdmin) });
    expect(confirmed.status).toBe(200);
    const ev = (await db()('audit_event')
      .where({ entity_type: 'user', entity_id: String(id), action: 'user.roles-changed' })
      .first())!;
    expect(JSON.parse(ev.before_json!).roles).toEqual(['operator']);
    expect(JSON.parse(ev.after_json!).roles).toEqual(['operator', 'verifier']);
    expect(ev.reason).toBe('trained as verifier');
  });
});
