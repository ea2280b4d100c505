/**
 * Segregation of duties on accounts (issue 12 item 1 and finding 1; docs/access.md, "Roles and who
 * grants them"; 21 CFR 11.10(g) authority checks, EU GMP Annex 11 §12 access rights). The
 * administrator role is held alone; nobody changes their own roles or status; QA manager,
 * verifier and administrator are granted only when a second administrator confirms with an
 * e-signature; the command that creates a site's first accounts is the one exception. Each rule is
 * tried through the API and, where it concerns the stored roles, through the runtime database
 * account directly (the database refuses too).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Knex } from 'knex';
import type { RoleGrantInsert } from '../../server/lib/db-tables';
import { createFirstAccounts } from '../../db/first-accounts';
import { dropDatabase, migrateDatabase, recreateDatabase } from '../../db/migrate';
import { dbSettings, knexConfig } from '../../db/config';
import knexFactory from 'knex';
import request from 'supertest';
import { agentFor, db, makeUser, ownerDb, sig, testApp, untyped } from './helpers';
import { TEST_DB } from './db-name';

type Agent = Awaited<ReturnType<typeof agentFor>>['agent'];

let adminA: { agent: Agent; user: Awaited<ReturnType<typeof makeUser>> };
let adminB: { agent: Agent; user: Awaited<ReturnType<typeof makeUser>> };
let owner: Knex;

const REFUSED = { errno: 1644 };

beforeAll(async () => {
  adminA = await agentFor(['admin']);
  adminB = await agentFor(['admin']);
  owner = ownerDb();
});
afterAll(async () => {
  await owner.destroy();
});

const roles = async (id: number) => JSON.parse((await db()('app_user').where({ id }).first())!.roles) as string[];

describe('the administrator role is held alone', () => {
  it('an account with administrator and another role is refused on creation and on change; nothing is stored', async () => {
    const name = `combo${Date.now() % 1e6}`;
    const res = await adminA.agent.post('/api/users').send({
      username: name,
      fullName: 'Combined Roles',
      email: 'c@test.example',
      roles: ['admin', 'qa_manager'],
      temporaryPassword: 'temporary-password-1',
    });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('ROLE_COMBINATION');
    expect(res.body.error.message).toMatch(/administrator role cannot be combined/);
    expect(await db()('app_user').where({ username: name }).first()).toBeUndefined();
    const op = await makeUser(['operator']);
    const chg = await adminA.agent.patch(`/api/users/${op.id}`).send({ roles: ['operator', 'admin'], reason: 'test' });
    expect(chg.status).toBe(400);
    expect(await roles(op.id)).toEqual(['operator']);
  });
});

describe('nobody changes their own roles or status (finding 1: an administrator gave themselves QA manager)', () => {
  it('an administrator cannot give themselves QA manager, remove their own role or deactivate themselves', async () => {
    for (const body of [
      { roles: ['qa_manager'], reason: 'I approve references too' },
      { roles: ['admin', 'qa_manager'], reason: 'I approve references too' },
      { active: false, reason: 'leaving' },
    ]) {
      const res = await adminA.agent.patch(`/api/users/${adminA.user.id}`).send(body);
      expect([400, 403], JSON.stringify(res.body)).toContain(res.status);
    }
    const self = await adminA.agent
      .patch(`/api/users/${adminA.user.id}`)
      .send({ roles: ['qa_manager'], reason: 'more work' });
    expect(self.body.error.message).toMatch(/Nobody changes their own roles/);
    expect(await roles(adminA.user.id)).toEqual(['admin']);
    expect((await db()('app_user').where({ id: adminA.user.id }).first())!.active).toBe(1);
    // a change of one's own name stays possible
    const name = await adminA.agent
      .patch(`/api/users/${adminA.user.id}`)
      .send({ fullName: 'Test A Renamed', reason: 'spelling' });
    expect(name.status).toBe(200);
  });

  it('the runtime account cannot write roles behind the application (database triggers)', async () => {
    const op = await makeUser(['operator']);
    // app_user.roles only ever equals the latest grant
    await expect(
      db()('app_user').where({ id: adminA.user.id }).update({ roles: '["admin","qa_manager"]' }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/latest role grant/) });
    await expect(db()('app_user').where({ id: op.id }).update({ roles: '["qa_manager"]' })).rejects.toMatchObject(
      REFUSED,
    );
    // a new account starts without roles
    await expect(
      db()('app_user').insert({
        username: `sneak${Date.now() % 1e6}`,
        full_name: 'Sneaky',
        email: 's@test.example',
        password_hash: 'x',
        roles: '["qa_manager"]',
        created_at: new Date(),
        updated_at: new Date(),
      }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/created without roles/) });
    // grants written behind the application (no seal, no link: the grant triggers refuse them first)
    const grant = (g: Omit<RoleGrantInsert, 'granted_at' | 'reason' | 'seal'>) =>
      untyped(db(), 'role_grant').insert({ granted_at: new Date(), reason: 'behind the application', ...g });
    // an administrator granting themselves a role
    await expect(
      grant({ user_id: adminA.user.id, roles: '["admin"]', kind: 'administrator', granted_by: adminA.user.id }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/own roles/) });
    // QA manager by one administrator
    await expect(
      grant({ user_id: op.id, roles: '["operator","qa_manager"]', kind: 'administrator', granted_by: adminA.user.id }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/second administrator/) });
    // the site-setup path is the owner account's only
    await expect(grant({ user_id: op.id, roles: '["qa_manager"]', kind: 'site-setup' })).rejects.toMatchObject({
      ...REFUSED,
      sqlMessage: expect.stringMatching(/owner account/),
    });
    // a two-person grant without a confirmed request
    await expect(
      grant({ user_id: op.id, roles: '["qa_manager"]', kind: 'two-person', granted_by: adminB.user.id }),
    ).rejects.toMatchObject(REFUSED);
    // administrator together with another role, in any grant
    await expect(
      grant({ user_id: op.id, roles: '["operator","admin"]', kind: 'administrator', granted_by: adminA.user.id }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/cannot be combined/) });
    // the grants themselves are append-only
    await expect(
      untyped(db(), 'role_grant').where({ user_id: op.id }).update({ roles: '["qa_manager"]' }),
    ).rejects.toMatchObject({ errno: 1142 });
    await expect(db()('role_grant').where({ user_id: op.id }).delete()).rejects.toMatchObject({ errno: 1142 });
    await expect(owner('role_grant').where({ user_id: op.id }).delete()).rejects.toMatchObject(REFUSED);
    expect(await roles(op.id)).toEqual(['operator']);
  });

  it('a request cannot be confirmed by its requester, even by writing the decision directly', async () => {
    const op = await makeUser(['operator']);
    const res = await adminA.agent
      .patch(`/api/users/${op.id}`)
      .send({ roles: ['operator', 'verifier'], reason: 'trained as verifier' });
    const requestId = res.body.pendingRoleChange.requestId;
    const self = await adminA.agent
      .post(`/api/users/role-changes/${requestId}/confirm`)
      .send({ signature: sig(adminA.user) });
    expect(self.status).toBe(403);
    await expect(
      db()('role_decision').insert({
        request_id: requestId,
        decision: 'confirmed',
        decided_by: adminA.user.id,
        decided_at: new Date(),
      }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/not the requester/) });
    // nor by another administrator without their signature of this request
    await expect(
      db()('role_decision').insert({
        request_id: requestId,
        decision: 'confirmed',
        decided_by: adminB.user.id,
        decided_at: new Date(),
      }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/signature/) });
    expect(await roles(op.id)).toEqual(['operator']);
    // clean up: the requester withdraws it
    expect(
      (await adminA.agent.post(`/api/users/role-changes/${requestId}/decline`).send({ reason: 'test over' })).status,
    ).toBe(200);
  });
});

describe('two-person rule: QA manager, verifier and administrator need a second administrator', () => {
  it('A asks, the roles wait; B confirms with a signature; the account holds them; each step audited and mailed', async () => {
    const op = await makeUser(['operator']);
    const mailBefore = Number((await db()('mail_outbox').count({ n: '*' }).first())?.n);
    const res = await adminA.agent
      .patch(`/api/users/${op.id}`)
      .send({ roles: ['operator', 'qa_manager'], reason: 'appointed QA manager, letter QA-2026-14' });
    expect(res.status).toBe(200);
    expect(res.body.roles).toEqual(['operator']);
    expect(res.body.pendingRoleChange).toMatchObject({
      rolesBefore: ['operator'],
      rolesAfter: ['operator', 'qa_manager'],
      requestedBy: adminA.user.id,
    });
    const requestId = res.body.pendingRoleChange.requestId as number;
    expect(await roles(op.id)).toEqual(['operator']);
    // the other administrators are told (one mail each, not the requester)
    const mails = await db()('mail_outbox').where('id', '>', 0).orderBy('id').offset(mailBefore);
    expect(mails.some((m) => m.to_address === `${adminB.user.username}@test.example`)).toBe(true);
    expect(mails.some((m) => m.to_address === `${adminA.user.username}@test.example`)).toBe(false);
    // listed as waiting, for every administrator
    const waiting = await adminB.agent.get('/api/users/role-changes');
    expect(waiting.body.find((w: { requestId: number }) => w.requestId === requestId)).toMatchObject({
      username: op.username,
      rolesAfter: ['operator', 'qa_manager'],
    });
    // a wrong password signs nothing
    const wrong = await adminB.agent
      .post(`/api/users/role-changes/${requestId}/confirm`)
      .send({ signature: { username: adminB.user.username, password: 'not-the-password' } });
    expect(wrong.status).toBe(401);
    expect(await roles(op.id)).toEqual(['operator']);
    // B confirms
    const ok = await adminB.agent
      .post(`/api/users/role-changes/${requestId}/confirm`)
      .send({ signature: sig(adminB.user) });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(ok.body.roles).toEqual(['operator', 'qa_manager']);
    expect(await roles(op.id)).toEqual(['operator', 'qa_manager']);
    const grant = await db()('role_grant').where({ user_id: op.id }).orderBy('id', 'desc').first();
    expect(grant).toMatchObject({ kind: 'two-person', granted_by: adminB.user.id, request_id: requestId });
    const s = await db()('e_signature')
      .where({ entity_type: 'role_request', entity_id: String(requestId) })
      .first();
    expect(s).toMatchObject({ user_id: adminB.user.id, meaning: 'role-change-confirmed' });
    const events = await db()('audit_event')
      .where({ entity_type: 'user', entity_id: String(op.id) })
      .orderBy('id');
    expect(events.map((e) => e.action)).toEqual(['user.role-change-requested', 'user.roles-changed']);
    const changed = JSON.parse(events[1].after_json!);
    expect(changed).toMatchObject({ roles: ['operator', 'qa_manager'], grantKind: 'two-person', requestId });
    expect(JSON.parse(events[1].before_json!).roles).toEqual(['operator']);
    expect(events[1].reason).toBe('appointed QA manager, letter QA-2026-14');
    // decided once
    const again = await adminB.agent
      .post(`/api/users/role-changes/${requestId}/confirm`)
      .send({ signature: sig(adminB.user) });
    expect(again.status).toBe(409);
  });

  it('an administrator who reset the second one\u2019s password (so knew it) cannot have that account confirm their request; a third can', async () => {
    const c = await agentFor(['admin']);
    const d = await agentFor(['admin']);
    const e = await agentFor(['admin']);
    // C resets D's password: C now knows a password of D's account and could sign in as D.
    const temp = 'temporary-reset-Password-77';
    const reset = await c.agent
      .post(`/api/users/${d.user.id}/reset-password`)
      .send({ temporaryPassword: temp, reason: 'forgot password, identity checked by phone' });
    expect(reset.status, JSON.stringify(reset.body)).toBe(200);
    const asD = request.agent(testApp());
    expect((await asD.post('/api/auth/sign-in').send({ username: d.user.username, password: temp })).status).toBe(200);
    const newPassword = 'chosen-by-whoever-signed-in-9';
    expect((await asD.post('/api/auth/password').send({ currentPassword: temp, newPassword })).status).toBe(204);
    // C asks QA manager for a puppet account, and "D" confirms it
    const puppet = await makeUser(['operator']);
    const asked = await c.agent
      .patch(`/api/users/${puppet.id}`)
      .send({ roles: ['operator', 'qa_manager'], reason: 'appointed QA manager' });
    const requestId = asked.body.pendingRoleChange.requestId as number;
    const refused = await asD
      .post(`/api/users/role-changes/${requestId}/confirm`)
      .send({ signature: { username: d.user.username, password: newPassword } });
    expect(refused.status).toBe(403);
    expect(refused.body.error.message).toMatch(/reset your password on \d{4}-\d{2}-\d{2}.*third administrator/);
    expect(await roles(puppet.id)).toEqual(['operator']);
    expect(
      await db()('e_signature')
        .where({ entity_type: 'role_request', entity_id: String(requestId) })
        .first(),
    ).toBeUndefined();
    // the same for an e-mail address C changed (a reset would go there)
    const f = await agentFor(['admin']);
    expect(
      (await c.agent.patch(`/api/users/${f.user.id}`).send({ email: 'elsewhere@test.example', reason: 'new address' }))
        .status,
    ).toBe(200);
    const byF = await f.agent.post(`/api/users/role-changes/${requestId}/confirm`).send({ signature: sig(f.user) });
    expect(byF.status).toBe(403);
    expect(byF.body.error.message).toMatch(/changed your e-mail address/);
    // a third administrator, untouched by C, confirms
    const ok = await e.agent.post(`/api/users/role-changes/${requestId}/confirm`).send({ signature: sig(e.user) });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(await roles(puppet.id)).toEqual(['operator', 'qa_manager']);
  });

  it('a new account asked with operator and verifier gets operator at once and verifier on confirmation', async () => {
    const name = `newver${Date.now() % 1e6}`;
    const res = await adminA.agent.post('/api/users').send({
      username: name,
      fullName: 'New Verifier',
      email: 'nv@test.example',
      roles: ['operator', 'verifier'],
      temporaryPassword: 'temporary-password-1',
    });
    expect(res.status).toBe(201);
    expect(res.body.roles).toEqual(['operator']);
    expect(res.body.pendingRoleChange.rolesAfter).toEqual(['operator', 'verifier']);
    const declined = await adminB.agent
      .post(`/api/users/role-changes/${res.body.pendingRoleChange.requestId}/decline`)
      .send({ reason: 'training record missing' });
    expect(declined.status).toBe(200);
    expect(await roles(res.body.id)).toEqual(['operator']);
    const ev = await db()('audit_event')
      .where({ entity_type: 'user', entity_id: String(res.body.id), action: 'user.role-change-declined' })
      .first();
    expect(ev!.reason).toBe('training record missing');
  });

  it('removing a role, or adding operator or auditor, is one administrator\u2019s change', async () => {
    const u = await makeUser(['operator', 'verifier']);
    const res = await adminA.agent
      .patch(`/api/users/${u.id}`)
      .send({ roles: ['operator', 'auditor'], reason: 'moved' });
    expect(res.status).toBe(200);
    expect(res.body.roles).toEqual(['operator', 'auditor']);
    expect(res.body.pendingRoleChange).toBeNull();
    expect((await db()('role_grant').where({ user_id: u.id }).orderBy('id', 'desc').first())!.kind).toBe(
      'administrator',
    );
  });
});

describe("the command that creates a site's first accounts", () => {
  const SETUP_DB = `${TEST_DB}_setup`.slice(0, 60);
  let setup: Knex;
  beforeAll(async () => {
    await recreateDatabase(SETUP_DB);
    await migrateDatabase(SETUP_DB);
    setup = knexFactory(knexConfig(dbSettings('owner', SETUP_DB), { min: 0, max: 2 }));
  }, 120_000);
  afterAll(async () => {
    await setup.destroy();
    await dropDatabase(SETUP_DB);
  });

  const FIRST = [
    { username: 'admin.one', fullName: 'First Admin', email: 'a1@site.example', roles: ['admin' as const] },
    { username: 'admin.two', fullName: 'Second Admin', email: 'a2@site.example', roles: ['admin' as const] },
    { username: 'qa.one', fullName: 'First QA', email: 'q1@site.example', roles: ['qa_manager' as const] },
  ];

  it('needs two administrators and no combined roles', async () => {
    await expect(createFirstAccounts(setup, FIRST.slice(1))).rejects.toThrow(/two administrators/);
    await expect(
      createFirstAccounts(setup, [...FIRST, { ...FIRST[2], username: 'x.y', roles: ['admin', 'operator'] }]),
    ).rejects.toThrow(/cannot be combined/);
    expect(Number((await setup('app_user').count({ n: '*' }).first())?.n)).toBe(0);
  });

  it('creates them with their roles, temporary passwords, audited as site setup; then refuses to run again', async () => {
    const pw = await createFirstAccounts(setup, FIRST);
    expect([...pw.keys()]).toEqual(['admin.one', 'admin.two', 'qa.one']);
    for (const p of pw.values()) expect(p.length).toBeGreaterThanOrEqual(16);
    const rows = await setup('app_user').orderBy('id');
    expect(rows.map((r) => [r.username, JSON.parse(r.roles), r.must_change_password])).toEqual([
      ['admin.one', ['admin'], 1],
      ['admin.two', ['admin'], 1],
      ['qa.one', ['qa_manager'], 1],
    ]);
    const grants = await setup('role_grant').orderBy('id');
    expect(grants.map((g) => g.kind)).toEqual(['site-setup', 'site-setup', 'site-setup']);
    const events = await setup('audit_event').where({ action: 'user.created-at-site-setup' }).orderBy('id');
    expect(events).toHaveLength(3);
    expect(events[0].actor_name).toBe('Drumline site setup (owner account)');
    expect(events[0].reason).toMatch(/site setup/);
    await expect(createFirstAccounts(setup, FIRST)).rejects.toThrow(/has 3 account\(s\) already/);
  });

  it('its path is closed to the runtime account of that database', async () => {
    const rt = knexFactory(knexConfig(dbSettings('runtime', SETUP_DB), { min: 0, max: 1 }));
    try {
      const u = (await setup('app_user').where({ username: 'qa.one' }).first())!;
      await expect(
        untyped(rt, 'role_grant').insert({
          user_id: u.id,
          roles: '["admin"]',
          kind: 'site-setup',
          granted_at: new Date(),
          reason: 'x',
        }),
      ).rejects.toMatchObject(REFUSED);
    } finally {
      await rt.destroy();
    }
  });
});
