/** Roles on the server, foreign Origin, bad input, the OpenAPI document (issue 2). */
import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { agentFor, db, testApp } from './helpers';
import { ROLES } from '../../server/lib/contract';
import { routeRegistry } from '../../server/lib/http';
import { toOpenApiPath } from '../../server/lib/openapi';

describe('roles are enforced by the server', () => {
  it.each(ROLES.filter((r) => r !== 'admin'))('%s gets 403 on the admin users routes', async (role) => {
    const { agent } = await agentFor([role]);
    const list = await agent.get('/api/users');
    expect(list.status).toBe(403);
    const create = await agent.post('/api/users').send({
      username: 'someone',
      fullName: 'Some One',
      email: 'a@b.example',
      roles: ['admin'],
      temporaryPassword: 'long-enough-password',
    });
    expect(create.status).toBe(403);
  });

  it.each(['operator', 'verifier'] as const)('%s gets 403 on the audit chain check', async (role) => {
    const { agent } = await agentFor([role]);
    expect((await agent.get('/api/audit/verify')).status).toBe(403);
  });

  it('a request without a session gets 401', async () => {
    const res = await request(testApp()).get('/api/users');
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('UNAUTHENTICATED');
  });
});

describe('foreign Origin', () => {
  it('refuses a state-changing request from another site', async () => {
    const { agent } = await agentFor(['admin']);
    const res = await agent.post('/api/auth/sign-out').set('Origin', 'https://evil.example');
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('FOREIGN_ORIGIN');
    expect((await agent.get('/api/auth/me')).status).toBe(200); // still signed in
  });
  it('accepts the same origin', async () => {
    const { agent } = await agentFor(['admin']);
    const res = await agent.post('/api/auth/sign-out').set('Origin', 'http://127.0.0.1:8080');
    expect(res.status).toBe(204);
  });
});

describe('bad input gets 400 with the error shape and writes nothing', () => {
  it('malformed JSON', async () => {
    const res = await request(testApp())
      .post('/api/auth/sign-in')
      .set('Content-Type', 'application/json')
      .send('{"username": ');
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('MALFORMED_JSON');
    expect(JSON.stringify(res.body)).not.toMatch(/at .*\.ts/); // no stack trace
  });
  it('missing fields, overlong strings and unknown roles on user creation', async () => {
    const { agent } = await agentFor(['admin']);
    const before = await db()('app_user').count({ n: '*' });
    const cases = [
      { fullName: 'No Username', email: 'x@y.example', roles: ['operator'], temporaryPassword: 'long-enough-password' },
      {
        username: 'x'.repeat(300),
        fullName: 'Long',
        email: 'x@y.example',
        roles: ['operator'],
        temporaryPassword: 'long-enough-password',
      },
      {
        username: 'rolecheck',
        fullName: 'Role',
        email: 'x@y.example',
        roles: ['superuser'],
        temporaryPassword: 'long-enough-password',
      },
      { username: 'shortpw', fullName: 'Short', email: 'x@y.example', roles: ['operator'], temporaryPassword: 'short' },
    ];
    for (const body of cases) {
      const res = await agent.post('/api/users').send(body);
      expect(res.status).toBe(400);
      expect(res.body.error).toMatchObject({ code: 'VALIDATION' });
      expect(typeof res.body.error.message).toBe('string');
    }
    const after = await db()('app_user').count({ n: '*' });
    expect(after[0].n).toBe(before[0].n);
  });
  it('an unknown API route answers 404 in the error shape', async () => {
    const res = await request(testApp()).get('/api/nothing-here');
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe('NOT_FOUND');
  });
});

describe('security headers and health', () => {
  it('sends standard security headers', async () => {
    const res = await request(testApp()).get('/api/health');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ status: 'ok', database: 'ok' });
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['content-security-policy']).toContain("default-src 'self'");
    expect(res.headers['x-frame-options']).toBeDefined();
  });
});

describe('OpenAPI document', () => {
  it('describes every mounted Express route, with its roles', async () => {
    const app = testApp();
    const res = await request(app).get('/api/openapi.json');
    expect(res.status).toBe(200);
    expect(res.body.openapi).toBe('3.1.0');
    // Walk Express's own router stack (not our registry) so a route added any other way is caught.
    const mounted: string[] = [];
    const walk = (
      stack: { route?: { path: string; methods: Record<string, boolean> }; handle?: { stack?: unknown[] } }[],
    ) => {
      for (const layer of stack) {
        if (layer.route) for (const m of Object.keys(layer.route.methods)) mounted.push(`${m} ${layer.route.path}`);
        else if (layer.handle?.stack) walk(layer.handle.stack as never);
      }
    };
    walk((app as unknown as { router: { stack: never[] } }).router.stack);
    const apiRoutes = mounted.filter((m) => m.split(' ')[1].startsWith('/api/'));
    expect(apiRoutes.length).toBeGreaterThan(8);
    for (const m of apiRoutes) {
      const [method, p] = m.split(' ');
      const op = res.body.paths[toOpenApiPath(p)]?.[method];
      expect(op, `${m} missing from openapi.json`).toBeDefined();
      expect(op['x-roles'], `${m} has no roles`).toBeDefined();
    }
    expect(routeRegistry.length).toBe(apiRoutes.length);
  });
});
