/**
 * Operating Drumline (issue 13 items 2 and 4): liveness and readiness, metrics in the Prometheus
 * text format for administrators or the scraper's token, structured logs with a request id that
 * never hold a password, a session token or an SQL statement, and a graceful shutdown that lets
 * a request in flight finish. The shutdown and log checks run a real server process.
 */
import net from 'node:net';
import { afterAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createApp } from '../../server/app';
import { enqueueMail } from '../../server/lib/mail';
import { safeError } from '../../server/lib/log';
import { agentFor, db, makeUser, ownerDb, testApp } from './helpers';
import { startServer, stopAll } from './server-process';

/** The value of one sample in Prometheus text, found by its name and labels in any order. */
function sample(text: string, name: string, labels: Record<string, string>): number {
  for (const line of text.split('\n')) {
    const m = /^([a-z_]+)\{([^}]*)\} (\S+)$/.exec(line);
    if (!m || m[1] !== name) continue;
    const got = Object.fromEntries([...m[2].matchAll(/(\w+)="([^"]*)"/g)].map((x) => [x[1], x[2]]));
    if (Object.entries(labels).every(([k, v]) => got[k] === v)) return Number(m[3]);
  }
  throw new Error(`no sample ${name} ${JSON.stringify(labels)}`);
}

const TOKEN = 'scrape-token-for-the-tests-0123456789';

afterAll(async () => {
  await stopAll();
});

describe('live and ready', () => {
  it('live answers without a session and without the database', async () => {
    const res = await request(testApp()).get('/api/live');
    expect(res.status).toBe(200);
    expect(res.body.status).toBe('live');
    expect(res.body.uptimeSeconds).toBeGreaterThanOrEqual(0);
  });

  it('ready says ready when the database answers and holds exactly this build’s migrations', async () => {
    const res = await request(testApp()).get('/api/ready');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ status: 'ready', database: 'ok', migrations: 'current' });
  });

  it('ready refuses (503) a database with a migration this server does not know, and one that lacks one', async () => {
    const owner = ownerDb();
    try {
      await owner('knex_migrations').insert({
        name: '999_from_a_newer_release',
        batch: 99,
        migration_time: new Date(),
      });
      const ahead = await request(testApp()).get('/api/ready');
      expect(ahead.status).toBe(503);
      expect(ahead.body).toMatchObject({
        status: 'not-ready',
        migrations: 'ahead',
        unknown: ['999_from_a_newer_release'],
      });
      await owner('knex_migrations').where({ name: '999_from_a_newer_release' }).delete();

      const last = await owner('knex_migrations').orderBy('id', 'desc').first();
      await owner('knex_migrations').where({ id: last.id }).delete();
      const behind = await request(testApp()).get('/api/ready');
      expect(behind.status).toBe(503);
      expect(behind.body).toMatchObject({ status: 'not-ready', migrations: 'behind', missing: [last.name] });
      await owner('knex_migrations').insert(last);
      expect((await request(testApp()).get('/api/ready')).status).toBe(200);
    } finally {
      await owner.destroy();
    }
  });

  it('the runtime account may read the migration list but not change it', async () => {
    await expect(db()('knex_migrations').where({ id: -1 }).delete()).rejects.toMatchObject({
      code: 'ER_TABLEACCESS_DENIED_ERROR',
    });
    await expect(
      db()('knex_migrations').insert({ name: 'x', batch: 1, migration_time: new Date() }),
    ).rejects.toMatchObject({ code: 'ER_TABLEACCESS_DENIED_ERROR' });
  });
});

describe('metrics', () => {
  it('refuses anonymous callers (401), every role but the administrator (403), and a wrong token', async () => {
    expect((await request(testApp()).get('/api/metrics')).status).toBe(401);
    for (const role of ['operator', 'verifier', 'qa_manager', 'auditor'] as const) {
      const { agent } = await agentFor([role]);
      expect((await agent.get('/api/metrics')).status, role).toBe(403);
    }
    // testApp() has no scrape token configured: a bearer token opens nothing.
    expect((await request(testApp()).get('/api/metrics').set('Authorization', `Bearer ${TOKEN}`)).status).toBe(401);
  });

  it('gives administrators request latency by route, compute time, outbox depth, pending certificates and pool use', async () => {
    const { agent } = await agentFor(['admin']);
    await agent.get('/api/auth/me');
    const before = await agent.get('/api/metrics');
    expect(before.status).toBe(200);
    expect(before.headers['content-type']).toMatch(/^text\/plain; version=0\.0\.4/);
    const text = before.text;
    expect(
      sample(text, 'drumline_http_request_duration_seconds_count', {
        method: 'GET',
        route: '/api/auth/me',
        status: '2xx',
      }),
    ).toBeGreaterThan(0);
    expect(text).toContain('# TYPE drumline_compute_task_seconds histogram');
    expect(sample(text, 'drumline_db_pool_connections', { state: 'max' })).toBe(10);
    // Never the path with its ids as a label (unbounded series): only declared routes.
    expect(text).not.toMatch(/route="\/api\/[^"]*\/\d+/);

    const queued = sample(text, 'drumline_mail_outbox', { status: 'queued' });
    await enqueueMail(db(), { to: ['metrics-check@test.example'], subject: 'metrics', text: 'x' });
    const after = (await agent.get('/api/metrics')).text;
    expect(sample(after, 'drumline_mail_outbox', { status: 'queued' })).toBe(queued + 1);

    const pending = Number(
      (await db()('lot').where({ identity_status: 'passed' }).whereNull('certificate_id').count({ n: '*' }).first())!.n,
    );
    expect(sample(after, 'drumline_certificates_pending', {})).toBe(pending);
  });

  it('lets a scraper with the configured token in, without a session', async () => {
    const { app } = createApp({ config: { metricsToken: TOKEN } });
    const ok = await request(app).get('/api/metrics').set('Authorization', `Bearer ${TOKEN}`);
    expect(ok.status).toBe(200);
    expect(ok.text).toContain('drumline_mail_outbox');
    const wrong = await request(app)
      .get('/api/metrics')
      .set('Authorization', `Bearer ${TOKEN.slice(0, -1)}x`);
    expect(wrong.status).toBe(401);
    expect(() => createApp({ config: { metricsToken: 'short' } })).toThrow(/at least 24 characters/);
  });
});

describe('logs', () => {
  it('a database error is logged by its code, never with its SQL statement or values', () => {
    const err = Object.assign(
      new Error(
        "insert into `app_user` (`password_hash`) values ('secret-hash-xyz') - Duplicate entry 'secret-hash-xyz'",
      ),
      { code: 'ER_DUP_ENTRY', errno: 1062, sqlState: '23000', sql: "insert into app_user values ('secret-hash-xyz')" },
    );
    const s = JSON.stringify(safeError(err));
    expect(s).not.toContain('secret-hash-xyz');
    expect(s).not.toMatch(/insert into/i);
    expect(safeError(err)).toMatchObject({ code: 'ER_DUP_ENTRY', errno: 1062, message: 'database error ER_DUP_ENTRY' });
  });

  it('one JSON line per request with its request id; no password, session token or SQL in any line', async () => {
    const u = await makeUser(['operator'], { password: 'Unique-Marker-Password-93' });
    const srv = await startServer();
    const given = 'proxy-req-0123456789';
    const bad = await request(srv.url)
      .post('/api/auth/sign-in')
      .set('X-Request-Id', given)
      .send({ username: u.username, password: 'Wrong-Marker-Password-71' });
    expect(bad.status).toBe(401);
    expect(bad.headers['x-request-id']).toBe(given);
    const good = await request(srv.url)
      .post('/api/auth/sign-in')
      .send({ username: u.username, password: 'Unique-Marker-Password-93' });
    expect(good.status).toBe(200);
    const cookie = String(good.headers['set-cookie']);
    const token = /drumline_session=([^;]+)/.exec(cookie)![1];
    const me = await request(srv.url).get('/api/auth/me?probe=1').set('Cookie', cookie.split(';')[0]);
    expect(me.status).toBe(200);
    const generated = me.headers['x-request-id'];
    expect(generated).toMatch(/^[0-9a-f-]{36}$/);
    await new Promise((r) => setTimeout(r, 300));
    await srv.stop();

    const out = srv.output();
    const lines = out
      .split('\n')
      .filter((l) => l.startsWith('{'))
      .map((l) => JSON.parse(l) as Record<string, unknown> & { req?: { id: string; path: string } });
    const signIn = lines.find((l) => l.req?.id === given);
    expect(signIn).toMatchObject({
      level: 'warn',
      route: '/api/auth/sign-in',
      req: { method: 'POST' },
      res: { status: 401 },
    });
    const meLine = lines.find((l) => l.req?.id === generated);
    expect(meLine).toMatchObject({ level: 'info', route: '/api/auth/me', req: { path: '/api/auth/me' } });
    expect(typeof meLine!.responseTime).toBe('number');
    expect(out).not.toContain('Marker-Password');
    expect(out).not.toContain(token);
    expect(out).not.toMatch(/\b(select|insert into|update `)/i);
    expect(out).not.toContain('probe=1');
  });
});

describe('graceful shutdown', () => {
  it('finishes a request in flight after SIGTERM, takes no new connection, and exits 0', async () => {
    const srv = await startServer();
    const body = JSON.stringify({ username: 'nobody-here', password: 'x'.repeat(20) });
    const sock = net.connect(srv.port, '127.0.0.1');
    await new Promise((r) => sock.once('connect', r));
    let answer = '';
    sock.on('data', (d) => (answer += d.toString()));
    const closed = new Promise((r) => sock.once('close', r));
    // Headers and half the body: the request is in flight when the stop signal comes.
    sock.write(
      `POST /api/auth/sign-in HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Type: application/json\r\nContent-Length: ${body.length}\r\n\r\n` +
        body.slice(0, 10),
    );
    await new Promise((r) => setTimeout(r, 200));
    const exit = srv.stop('SIGTERM');
    await new Promise((r) => setTimeout(r, 400));
    const refused = await new Promise<string>((resolve) => {
      const s = net.connect(srv.port, '127.0.0.1');
      s.once('connect', () => {
        s.destroy();
        resolve('connected');
      });
      s.once('error', (e: NodeJS.ErrnoException) => resolve(e.code ?? 'error'));
    });
    expect(refused).toBe('ECONNREFUSED');
    sock.write(body.slice(10));
    await Promise.race([closed, new Promise((r) => setTimeout(r, 5000))]);
    expect(answer).toMatch(/^HTTP\/1\.1 401 /);
    expect(answer).toContain('"code":"SIGN_IN_FAILED"');
    expect(await exit).toBe(0);
    expect(srv.output()).toMatch(/"msg":"stopped"/);
  });
});
