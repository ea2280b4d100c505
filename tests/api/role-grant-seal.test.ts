/**
 * Sealed role grants (server/lib/grant-seal.ts; docs/access.md, "Roles and who grants them").
 * The grant triggers refuse a malformed grant, but whoever holds the runtime database password can
 * write a well-formed one. Each path is tried here through the runtime account itself: a grant
 * made up by the account, a whole forged two-person chain, a replayed old grant. None is honoured:
 * the account acts with no role, and the integrity sweep names the grant. The legitimate paths
 * (site setup, one administrator, two administrators) give sealed grants that are honoured.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import knexFactory from 'knex';
import { dbSettings, knexConfig } from '../../db/config';
import { dropDatabase, migrateDatabase, recreateDatabase } from '../../db/migrate';
import { migrationSource } from '../../db/migrations/index';
import { TEST_DB } from './db-name';
import { grantSeal, grantStanding } from '../../server/lib/grant-seal';
import { sweepTick } from '../../server/modules/integrity/service';
import { agentFor, db, makeUser, PASSWORD, sig, testApp } from './helpers';

type Agent = ReturnType<typeof request.agent>;
let adminA: Awaited<ReturnType<typeof agentFor>>;
let adminB: Awaited<ReturnType<typeof agentFor>>;
let qa: Awaited<ReturnType<typeof agentFor>>;

const REFUSED = { errno: 1644 }; // a trigger said no (SQLSTATE 45000)
const FAKE_SEAL = 'ab'.repeat(32);

async function signIn(username: string): Promise<Agent> {
  const agent = request.agent(testApp());
  const res = await agent.post('/api/auth/sign-in').send({ username, password: PASSWORD });
  expect(res.status).toBe(200);
  return agent;
}

const latestGrant = async (userId: number) =>
  (await db()('role_grant').where({ user_id: userId }).orderBy('id', 'desc').first())!;

/** Roles the server honours for a signed-in account, and whether an operator's page opens. */
async function honoured(agent: Agent) {
  const me = await agent.get('/api/auth/me');
  expect(me.status).toBe(200);
  return me.body.user.roles as string[];
}

async function sweepAlerts(userId: number) {
  const run = await qa.agent.post('/api/integrity/runs').send({});
  expect(run.status).toBe(202);
  await sweepTick(db(), 0);
  return db()('integrity_alert').where({ kind: 'role-grant', subject_type: 'app_user', subject_id: String(userId) });
}

beforeAll(async () => {
  adminA = await agentFor(['admin']);
  adminB = await agentFor(['admin']);
  qa = await agentFor(['qa_manager']);
});

describe('sealed role grants', () => {
  it('the legitimate paths write sealed, linked grants that are honoured', async () => {
    const op = await makeUser(['operator']);
    const first = await latestGrant(op.id);
    expect(first).toMatchObject({ kind: 'site-setup', previous_grant_id: null });
    expect(first.seal).toBe(grantSeal(first));
    const agent = await signIn(op.username);
    expect(await honoured(agent)).toEqual(['operator']);
    // one administrator adds auditor; a second confirms verifier
    expect(
      (await adminA.agent.patch(`/api/users/${op.id}`).send({ roles: ['operator', 'auditor'], reason: 'audit duty' }))
        .status,
    ).toBe(200);
    const second = await latestGrant(op.id);
    expect(second).toMatchObject({ kind: 'administrator', previous_grant_id: first.id });
    const req = await adminA.agent
      .patch(`/api/users/${op.id}`)
      .send({ roles: ['operator', 'auditor', 'verifier'], reason: 'trained as verifier' });
    const requestId = req.body.pendingRoleChange.requestId;
    const ok = await adminB.agent
      .post(`/api/users/role-changes/${requestId}/confirm`)
      .send({ signature: sig(adminB.user) });
    expect(ok.status).toBe(200);
    const third = await latestGrant(op.id);
    expect(third).toMatchObject({ kind: 'two-person', previous_grant_id: second.id });
    expect(await grantStanding(db(), op.id)).toMatchObject({ ok: true, grantId: third.id });
    expect(await honoured(await signIn(op.username))).toEqual(['operator', 'verifier', 'auditor']);
  });

  it('a grant the runtime account writes itself is not honoured, and the sweep names it', async () => {
    const op = await makeUser(['operator']);
    const agent = await signIn(op.username);
    const prev = await latestGrant(op.id);
    // well formed in every way the triggers check: an active administrator named as granter,
    // no confirmed role added, linked to the latest grant, a seal of the right shape
    await db()('role_grant').insert({
      user_id: op.id,
      roles: '["operator","auditor"]',
      kind: 'administrator',
      granted_by: adminA.user.id,
      granted_at: new Date(),
      reason: 'behind the application',
      previous_grant_id: prev.id,
      seal: FAKE_SEAL,
    });
    await db()('app_user').where({ id: op.id }).update({ roles: '["operator","auditor"]' });
    expect(await grantStanding(db(), op.id)).toMatchObject({ ok: false, why: expect.stringMatching(/no valid seal/) });
    expect(await honoured(agent)).toEqual([]);
    expect((await agent.get('/api/lots')).status).toBe(403);
    const alerts = await sweepAlerts(op.id);
    expect(alerts.map((a) => a.found)).toContainEqual(expect.stringMatching(/no valid seal/));
  });

  it('a forged two-person chain (request, signature row, decision, grant) gives no QA manager', async () => {
    const op = await makeUser(['operator']);
    const agent = await signIn(op.username);
    const prev = await latestGrant(op.id);
    const now = new Date();
    const [requestId] = await db()('role_request').insert({
      user_id: op.id,
      roles_before: '["operator"]',
      roles_after: '["operator","qa_manager"]',
      requested_by: adminA.user.id,
      requested_at: now,
      reason: 'forged',
    });
    const [sigId] = await db()('e_signature').insert({
      user_id: adminB.user.id,
      printed_name: adminB.user.fullName,
      meaning: 'role-change-confirmed',
      entity_type: 'role_request',
      entity_id: String(requestId),
      content_hash: '0'.repeat(64),
      signed_at: now,
    });
    const [decisionId] = await db()('role_decision').insert({
      request_id: requestId,
      decision: 'confirmed',
      decided_by: adminB.user.id,
      decided_at: now,
      reason: null,
      signature_id: sigId,
    });
    await db()('role_grant').insert({
      user_id: op.id,
      roles: '["operator","qa_manager"]',
      kind: 'two-person',
      granted_by: adminB.user.id,
      request_id: requestId,
      decision_id: decisionId,
      granted_at: now,
      reason: 'forged',
      previous_grant_id: prev.id,
      seal: FAKE_SEAL,
    });
    await db()('app_user').where({ id: op.id }).update({ roles: '["operator","qa_manager"]' });
    expect(await honoured(agent)).toEqual([]);
    expect((await agent.get('/api/integrity/alerts')).status).toBe(403);
    expect((await sweepAlerts(op.id)).length).toBeGreaterThan(0);
  });

  it('an old grant replayed is refused by the database, or not honoured when relinked', async () => {
    const op = await makeUser(['operator']);
    await adminA.agent.patch(`/api/users/${op.id}`).send({ roles: ['operator', 'auditor'], reason: 'audit duty' });
    const withAuditor = await latestGrant(op.id);
    await adminA.agent.patch(`/api/users/${op.id}`).send({ roles: ['operator'], reason: 'audit duty over' });
    const current = await latestGrant(op.id);
    expect(current.previous_grant_id).toBe(withAuditor.id);
    const { id: _id, ...copy } = withAuditor;
    // as it was: it does not follow the latest grant
    await expect(db()('role_grant').insert(copy)).rejects.toMatchObject({
      ...REFUSED,
      sqlMessage: expect.stringMatching(/follows the account's latest grant/),
    });
    // relinked to the latest grant: its seal no longer fits
    await db()('role_grant').insert({ ...copy, previous_grant_id: current.id });
    await db()('app_user').where({ id: op.id }).update({ roles: copy.roles });
    expect(await grantStanding(db(), op.id)).toMatchObject({ ok: false });
    expect(await honoured(await signIn(op.username))).toEqual([]);
  });

  it('a grant without its seal is refused by the database', async () => {
    const op = await makeUser(['operator']);
    const prev = await latestGrant(op.id);
    const row = {
      user_id: op.id,
      roles: '["operator","auditor"]',
      kind: 'administrator',
      granted_by: adminA.user.id,
      granted_at: new Date(),
      reason: 'no seal',
      previous_grant_id: prev.id,
    };
    await expect(db()('role_grant').insert({ ...row, seal: 'not a seal' })).rejects.toMatchObject({
      ...REFUSED,
      sqlMessage: expect.stringMatching(/carries its seal/),
    });
    expect(await latestGrant(op.id)).toMatchObject({ id: prev.id });
  });

  it('the seal covers every field of the grant and the grant it follows', async () => {
    const op = await makeUser(['operator']);
    const g = await latestGrant(op.id);
    const base = grantSeal(g);
    expect(base).toMatch(/^[0-9a-f]{64}$/);
    for (const change of [
      { user_id: g.user_id + 1 },
      { roles: '["operator","auditor"]' },
      { kind: 'administrator' },
      { granted_by: adminA.user.id },
      { granted_at: new Date(g.granted_at.getTime() + 1) },
      { reason: g.reason + '.' },
      { previous_grant_id: 1 },
      { request_id: 1 },
      { decision_id: 1 },
    ])
      expect(grantSeal({ ...g, ...change }), JSON.stringify(change)).not.toBe(base);
  });
});

describe('the migration that brings seals', () => {
  it('seals and links the grants a site already holds, in order', async () => {
    const name = `${TEST_DB}_seal`.slice(0, 60);
    await recreateDatabase(name);
    try {
      await migrateDatabase(name);
      const owner = knexFactory(knexConfig(dbSettings('owner', name), { min: 0, max: 1 }));
      try {
        await owner.migrate.down({ migrationSource }); // back to the schema before seals
        expect(await owner.schema.hasColumn('role_grant', 'seal')).toBe(false);
        const now = new Date();
        const ids: number[] = [];
        for (const [username, roles] of [
          ['site.admin', '["admin"]'],
          ['site.op', '["operator"]'],
        ]) {
          const [id] = await owner('app_user').insert({
            username,
            full_name: username,
            email: `${username}@test.example`,
            password_hash: 'x',
            roles: '[]',
            created_at: now,
            updated_at: now,
          });
          await owner.raw(
            "INSERT INTO role_grant (user_id, roles, kind, granted_at, reason) VALUES (?, ?, 'site-setup', ?, 'before seals')",
            [id, roles, now],
          );
          await owner('app_user').where({ id }).update({ roles });
          ids.push(id);
        }
        await owner.raw(
          "INSERT INTO role_grant (user_id, roles, kind, granted_by, granted_at, reason) VALUES (?, '[\"operator\",\"auditor\"]', 'administrator', ?, ?, 'before seals')",
          [ids[1], ids[0], now],
        );
        await owner('app_user').where({ id: ids[1] }).update({ roles: '["operator","auditor"]' });
        await owner.migrate.latest({ migrationSource });
        const grants = await owner('role_grant').orderBy('id');
        expect(grants).toHaveLength(3);
        expect(grants.map((g) => g.previous_grant_id)).toEqual([null, null, grants[1].id]);
        for (const g of grants) expect(g.seal).toBe(grantSeal(g));
        for (const id of ids) expect(await grantStanding(owner, id)).toMatchObject({ ok: true });
        expect(await grantStanding(owner, ids[1])).toMatchObject({ roles: '["operator","auditor"]' });
      } finally {
        await owner.destroy();
      }
    } finally {
      await dropDatabase(name);
    }
  });
});
