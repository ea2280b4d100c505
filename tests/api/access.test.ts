/**
 * Least exposure (issue 12 item 8 and finding 11 in part; 21 CFR 11.10(d)(g), EU GMP Annex 11 §12):
 * docs/access.md states every route's roles; this test reads that table, checks it against the
 * routes the application declares, and walks every route with no session and with each role. The
 * routes are taken from the application itself (the route registry, which the OpenAPI test ties to
 * Express's router), so a route added later fails here until docs/access.md states its roles.
 */
import fs from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { repoRoot } from '../../db/config';
import { ROLES, type Role } from '../../server/lib/contract';
import { routeRegistry } from '../../server/lib/http';
import { agentFor, db, makeUser, testApp } from './helpers';

type Agent = Awaited<ReturnType<typeof agentFor>>['agent'];
type Access = 'public' | 'signed in' | Role[] | `machine ${string}`;

/** The route table of docs/access.md: "| `METHOD /api/...` | roles | why |". */
function documented(): Map<string, Access> {
  const text = fs.readFileSync(path.join(repoRoot, 'docs', 'access.md'), 'utf8');
  const out = new Map<string, Access>();
  for (const line of text.split('\n')) {
    const m = /^\| `(GET|POST|PUT|PATCH|DELETE) (\/api\/[^`]+)` \| ([^|]+) \|/.exec(line);
    if (!m) continue;
    const key = `${m[1].toLowerCase()} ${m[2]}`;
    expect(out.has(key), `${key} appears twice in docs/access.md`).toBe(false);
    const roles = m[3].trim();
    out.set(
      key,
      roles === 'public'
        ? 'public'
        : roles === 'signed in'
          ? 'signed in'
          : roles.startsWith('machine ')
            ? (`machine ${/`([a-z:]+)`/.exec(roles)?.[1]}` as const)
            : [...roles.matchAll(/`([a-z_]+)`/g)].map((x) => x[1] as Role),
    );
  }
  return out;
}

function declared(): Map<string, Access> {
  return new Map(
    routeRegistry.map((d) => [
      `${d.method} ${d.path}`,
      d.access === 'public'
        ? 'public'
        : d.access === 'authenticated'
          ? 'signed in'
          : 'machine' in d.access
            ? (`machine ${d.access.machine}` as const)
            : [...d.access.roles].sort(),
    ]),
  );
}

/** Query values that keep a GET small in this walk (the route is still requested). */
const QUERY: Record<string, Record<string, string>> = {
  'get /api/audit/export.csv': { entityType: 'no_such_type' },
  'get /api/audit/export.pdf': { entityType: 'no_such_type' },
};

/**
 * Routes that the service narrows further per record (the table names the roles that may call the
 * route at all); a 403 from the service for a named role is not counted against the table.
 */
const NARROWED_IN_SERVICE: Record<string, string> = {
  'get /api/history/:entityType/:entityId':
    'administrators see account history only, operators and verifiers no account history (tests/api/audit-trail.test.ts, record history)',
};

const url = (p: string) => p.replace(/:([A-Za-z0-9_]+)/g, '999999999');

function call(agent: Agent | ReturnType<typeof request>, key: string) {
  const [method, p] = key.split(' ');
  const r = (agent as unknown as Record<string, (u: string) => request.Test>)[method](url(p));
  if (QUERY[key]) r.query(QUERY[key]);
  return method === 'get' ? r : r.send({});
}

let agents: Map<Role, Agent>;

beforeAll(async () => {
  testApp();
  agents = new Map();
  for (const role of ROLES) agents.set(role, (await agentFor([role])).agent);
});

describe('docs/access.md states every route, with the roles the application enforces', () => {
  it('the table and the declared routes are the same routes with the same roles', () => {
    const doc = documented();
    const app = declared();
    expect([...doc.keys()].sort(), 'routes in docs/access.md vs routes of the application').toEqual(
      [...app.keys()].sort(),
    );
    for (const [k, a] of app) {
      const d = doc.get(k)!;
      expect(Array.isArray(d) ? [...d].sort() : d, k).toEqual(a);
    }
    expect(app.size).toBeGreaterThan(80);
  });
});

describe('every route walked with no session and with each role', () => {
  it('anonymous: 401 everywhere but the public routes', async () => {
    const anon = request(testApp());
    const wrong: string[] = [];
    for (const [key, access] of declared()) {
      const res = await call(anon, key);
      if (access === 'public' ? res.status === 401 || res.status === 403 : res.status !== 401)
        wrong.push(`${key} -> ${res.status}`);
    }
    expect(wrong).toEqual([]);
  });

  it.each([...ROLES])('%s: 403 exactly where the table does not name the role', async (role) => {
    const agent = agents.get(role)!;
    const wrong: string[] = [];
    let allowed = 0;
    let refused = 0;
    // sign-out last: it ends this agent's session
    const keys = [...declared().keys()].sort(
      (a, b) => Number(a === 'post /api/auth/sign-out') - Number(b === 'post /api/auth/sign-out'),
    );
    for (const key of keys) {
      const access = declared().get(key)!;
      // a machine route is never open to a person's session (403 for every role)
      const may = access === 'public' || access === 'signed in' || (Array.isArray(access) && access.includes(role));
      const res = await call(agent, key);
      const forbidden = res.status === 403 && res.body?.error?.code === 'FORBIDDEN';
      if (res.status === 401) wrong.push(`${key} -> 401 (the session was lost)`);
      else if (may && forbidden && !(key in NARROWED_IN_SERVICE))
        wrong.push(`${key} refused, though the table names ${role}`);
      else if (!may && !forbidden) wrong.push(`${key} -> ${res.status}, though the table does not name ${role}`);
      if (may) allowed++;
      else refused++;
    }
    expect(wrong).toEqual([]);
    console.log(`[access] ${role}: ${allowed} routes open, ${refused} refused`);
  });
});

describe('the jobs, as finding 11 of issue 12 asked', () => {
  it('an instrument check is recorded by operators, not by QA managers or verifiers', async () => {
    const table = documented();
    expect(table.get('post /api/instruments/:id/checks')).toEqual(['operator']);
    for (const role of ['qa_manager', 'verifier'] as const) {
      const { agent } = await agentFor([role]);
      const res = await agent.post('/api/instruments/1/checks').send({});
      expect(res.status, role).toBe(403);
    }
  });

  it('the administrator reads no GMP record or raw file (accounts, the trail of account events and certificates only)', async () => {
    const { agent: admin } = await agentFor(['admin']);
    for (const p of [
      '/api/materials',
      '/api/instruments',
      '/api/lots',
      '/api/references/1/file',
      '/api/measurements/1/file',
    ])
      expect((await admin.get(p)).status, p).toBe(403);
  });

  it('operators do not download reference files; verifiers, QA and auditors do', () => {
    expect(documented().get('get /api/references/:id/file')).toEqual(['verifier', 'qa_manager', 'auditor']);
  });
});

describe('the person directory', () => {
  it('lists active accounts only, with the fields a picker needs', async () => {
    const gone = await makeUser(['operator']);
    await db()('app_user').where({ id: gone.id }).update({ active: 0 });
    const here = await makeUser(['verifier']);
    const { agent } = await agentFor(['operator']);
    const res = await agent.get('/api/users/directory');
    expect(res.status).toBe(200);
    const ids = res.body.map((u: { id: number }) => u.id);
    expect(ids).toContain(here.id);
    expect(ids).not.toContain(gone.id);
    for (const u of res.body) expect(Object.keys(u).sort()).toEqual(['fullName', 'id', 'username']);
    const inactive = await db()('app_user').where({ active: 0 }).select('id');
    for (const { id } of inactive) expect(ids).not.toContain(id);
  });
});
