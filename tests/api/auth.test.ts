/** Sign-in, lockout, unlock, forced password change, idle expiry, sign-out (issue 2; 21 CFR 11.10(d), 11.300). */
import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { agentFor, db, makeUser, PASSWORD, testApp } from './helpers';

async function auditActions(userId: number): Promise<string[]> {
  const rows = await db()('audit_event')
    .where({ entity_type: 'user', entity_id: String(userId) })
    .orderBy('id');
  return rows.map((r) => r.action);
}

describe('sign-in', () => {
  it('signs in with the right password, sets an httpOnly SameSite cookie and audits it', async () => {
    const u = await makeUser(['operator']);
    const res = await request(testApp()).post('/api/auth/sign-in').send({ username: u.username, password: PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.user.username).toBe(u.username);
    const cookie = String(res.headers['set-cookie']);
    expect(cookie).toMatch(/drumline_session=/);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Strict/i);
    expect(await auditActions(u.id)).toContain('auth.signed-in');
  });

  it('refuses a wrong password with a generic message and audits the failure', async () => {
    const u = await makeUser(['operator']);
    const res = await request(testApp())
      .post('/api/auth/sign-in')
      .send({ username: u.username, password: 'wrong-password-123' });
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('SIGN_IN_FAILED');
    expect(await auditActions(u.id)).toContain('auth.sign-in-failed');
  });

  it('locks the account after 5 consecutive failures, even for the right password, until an admin unlocks it', async () => {
    const u = await makeUser(['operator']);
    const watchingAdmin = await makeUser(['admin']);
    const app = testApp();
    for (let i = 0; i < 5; i++) {
      const r = await request(app)
        .post('/api/auth/sign-in')
        .send({ username: u.username, password: `bad-password-${i}` });
      expect(r.status).toBe(401);
    }
    const locked = await request(app).post('/api/auth/sign-in').send({ username: u.username, password: PASSWORD });
    // A locked account answers exactly like an unknown one (finding 11): nothing tells it is locked.
    expect(locked.status).toBe(401);
    expect(locked.body.error.code).toBe('SIGN_IN_FAILED');
    expect(await auditActions(u.id)).toContain('auth.locked');
    expect(await auditActions(u.id)).toContain('auth.sign-in-refused-locked');
    // 21 CFR 11.300(d): the administrators are told at once
    const lockMail = await db()('mail_outbox').where({ subject: `Account locked: ${u.username}` });
    expect(lockMail.map((m) => m.to_address)).toContain(`${watchingAdmin.username}@test.example`);
    expect(lockMail[0].body).toContain('5 consecutive failed sign-ins');

    const { agent: admin } = await agentFor(['admin']);
    const list = await admin.get('/api/users');
    expect(list.body.find((x: { id: number }) => x.id === u.id).lockedUntil).not.toBeNull();
    const unlock = await admin.post(`/api/users/${u.id}/unlock`).send({ reason: 'identity confirmed by phone' });
    expect(unlock.status).toBe(200);
    expect(unlock.body.lockedUntil).toBeNull();
    const again = await request(app).post('/api/auth/sign-in').send({ username: u.username, password: PASSWORD });
    expect(again.status).toBe(200);
    expect(await auditActions(u.id)).toContain('user.unlocked');
  });

  it('a new account must change its password before anything else', async () => {
    const u = await makeUser(['operator'], { mustChange: true });
    const agent = request.agent(testApp());
    const s = await agent.post('/api/auth/sign-in').send({ username: u.username, password: PASSWORD });
    expect(s.body.user.mustChangePassword).toBe(true);
    const blocked = await agent.get('/api/users/directory');
    expect(blocked.status).toBe(403);
    expect(blocked.body.error.code).toBe('PASSWORD_CHANGE_REQUIRED');
    const short = await agent.post('/api/auth/password').send({ currentPassword: PASSWORD, newPassword: 'short' });
    expect(short.status).toBe(400);
    const ok = await agent
      .post('/api/auth/password')
      .send({ currentPassword: PASSWORD, newPassword: 'a-much-longer-new-secret' });
    expect(ok.status).toBe(204);
    const me = await agent.get('/api/auth/me');
    expect(me.body.user.mustChangePassword).toBe(false);
    expect((await agent.get('/api/users/directory')).status).toBe(200);
    expect(await auditActions(u.id)).toContain('auth.password-changed');
  });

  it('a password older than the maximum age (default 90 days) must be changed at the next sign-in', async () => {
    // 21 CFR 11.300(b): passwords are periodically checked and revised.
    const u = await makeUser(['operator']);
    await db()('app_user')
      .where({ id: u.id })
      .update({ password_changed_at: new Date(Date.now() - 91 * 86_400_000) });
    const agent = request.agent(testApp());
    const s = await agent.post('/api/auth/sign-in').send({ username: u.username, password: PASSWORD });
    expect(s.status).toBe(200);
    expect(s.body.user.mustChangePassword).toBe(true);
    expect((await agent.get('/api/users/directory')).body.error.code).toBe('PASSWORD_CHANGE_REQUIRED');
    expect(await auditActions(u.id)).toContain('auth.password-expired');
    const ok = await agent
      .post('/api/auth/password')
      .send({ currentPassword: PASSWORD, newPassword: 'a-fresh-password-for-today' });
    expect(ok.status).toBe(204);
    // a password changed 89 days ago is still good
    const v = await makeUser(['operator']);
    await db()('app_user')
      .where({ id: v.id })
      .update({ password_changed_at: new Date(Date.now() - 89 * 86_400_000) });
    const t = await request(testApp()).post('/api/auth/sign-in').send({ username: v.username, password: PASSWORD });
    expect(t.body.user.mustChangePassword).toBe(false);
  });

  it('a session expires after the idle time', async () => {
    const { agent, user } = await agentFor(['operator']);
    expect((await agent.get('/api/auth/me')).status).toBe(200);
    // 31 minutes of inactivity (default idle limit 30 minutes)
    await db()('user_session')
      .where({ user_id: user.id })
      .update({ last_seen_at: new Date(Date.now() - 31 * 60_000) });
    const res = await agent.get('/api/auth/me');
    expect(res.status).toBe(401);
    expect(await db()('user_session').where({ user_id: user.id })).toHaveLength(0);
  });

  it('signing out ends the session', async () => {
    const { agent, user } = await agentFor(['verifier']);
    expect((await agent.post('/api/auth/sign-out')).status).toBe(204);
    expect((await agent.get('/api/auth/me')).status).toBe(401);
    expect(await auditActions(user.id)).toContain('auth.signed-out');
  });

  it('a deactivated account cannot sign in and its sessions end', async () => {
    const { agent, user } = await agentFor(['operator']);
    const { agent: admin } = await agentFor(['admin']);
    const r = await admin.patch(`/api/users/${user.id}`).send({ active: false, reason: 'left the company' });
    expect(r.status).toBe(200);
    expect((await agent.get('/api/auth/me')).status).toBe(401);
    const s = await request(testApp()).post('/api/auth/sign-in').send({ username: user.username, password: PASSWORD });
    expect(s.status).toBe(401);
    expect(await db()('app_user').where({ id: user.id }).first()).toBeTruthy(); // never deleted
  });
});
