/**
 * The auditor reads everything and changes nothing (issue 7; 21 CFR 11.10(d)(g); EU GMP Annex 11
 * §12). The write routes are enumerated from the application itself - Express's own router stack
 * of testApp(), cross-checked with the route registry of server/lib/http.ts - so a route added
 * later is covered without editing this file. Every non-GET route answers 403 to an account that
 * holds only the auditor role, except the few listed in AUDITOR_MAY_WRITE with the reason.
 * Every GET route is open to the auditor except the few in NOT_FOR_AUDITORS. Real downloads: raw
 * spectrum files (measurement, reference, instrument check) and the signed certificate PDF.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import request from 'supertest';
import { createHash } from 'node:crypto';
import { agentFor, db, makeUser, testApp } from './helpers';
import { routeRegistry } from '../../server/lib/http';
import { ROLES, type Role } from '../../server/lib/contract';

type Agent = Awaited<ReturnType<typeof agentFor>>['agent'];

/**
 * Write routes an auditor-only account may call, each with why. Each must exist (a stale entry
 * fails the test) and is exercised below.
 */
const AUDITOR_MAY_WRITE: Record<string, string> = {
  'post /api/auth/sign-in':
    'Public by nature: the auditor has to sign in. Creates a session and an audit event; changes no record.',
  'post /api/auth/sign-out': "Ends the auditor's own session (and writes its audit event); changes no record.",
  'post /api/auth/password':
    "Changes the auditor's own password, as 21 CFR 11.300 expects of every account (periodic revision, first sign-in); changes no GMP record.",
  'post /api/integrity/runs':
    'Asks for an integrity sweep: re-checking stored files and signatures against their hashes is part of the auditor role (docs/access.md). Stores the sweep run and its audit event; changes no record.',
  'post /api/audit/verify/full':
    "Starts the full check of the audit chain in the background: verifying the trail is part of the auditor role (docs/access.md). Stores the check's progress row and its audit event; changes no record.",
  'post /api/certificates/verify':
    'Checks an uploaded certificate PDF against the stored one and its signature - checking certificates is part of the auditor role (docs/access.md). Stores nothing but the audit event of the check.',
};

/** Read routes closed to auditors, each with why (everything else must be open to them). */
const NOT_FOR_AUDITORS: Record<string, string> = {
  'get /api/metrics':
    'Operating figures (latency, queue depths, pool use) for the administrator and the monitoring scraper; no GMP record is in them (docs/access.md).',
  'get /api/machine-accounts':
    "The administrator's management of machine accounts; their creation, revocation and every use are audit events the auditor reads.",
  'get /api/webhooks': "The administrator's webhook endpoints; their creation and deactivation are audit events.",
  'get /api/webhook-deliveries':
    "The administrator's delivery queue (operational state); the events announced are GMP events in the audit trail.",
  'get /api/erp/lots/:lotNumber': 'A machine route: reached only with a machine token, by no person.',
  'get /api/users':
    "Account administration (e-mail addresses, lock state) is the administrator's; auditors read every account event in the audit trail.",
  'get /api/users/:id': 'As above.',
  'get /api/users/role-changes':
    "Role changes waiting for a second administrator: the administrators' to-do list; every request and decision is an account event in the audit trail.",
  'get /api/dev/mail': 'Development-only capture of outgoing mail; not a record.',
  'get /api/mail/outbox': 'Mail delivery queue for the administrator; not a GMP record.',
  'get /api/certificates/signing-identity':
    "Key management of the site's signing certificate (administrator). The signer of each certificate is shown by certificate verification, which auditors use.",
  'get /api/verification/queue':
    "A verifier's own to-do list (tests that this verifier may verify); the tests themselves are open to auditors.",
  'get /api/tests/:id/hand-over-candidates':
    'A picker of operators for handing an attempt over; every hand-over is in the audit trail and the record history.',
};

/** Query values a GET route needs to stay small in this sweep (the route is still requested). */
const SWEEP_QUERY: Record<string, Record<string, string>> = {
  'get /api/audit/export.csv': { entityType: 'no_such_type' },
  'get /api/audit/export.pdf': { entityType: 'no_such_type' },
};

interface Mounted {
  method: string;
  path: string;
  key: string;
}

/** Walks Express's router stack (not our registry), so a route added any other way is seen too. */
function mountedRoutes(): Mounted[] {
  const out: Mounted[] = [];
  const walk = (
    stack: { route?: { path: string; methods: Record<string, boolean> }; handle?: { stack?: unknown[] } }[],
  ) => {
    for (const layer of stack) {
      if (layer.route) {
        for (const m of Object.keys(layer.route.methods))
          if (m !== '_all') out.push({ method: m, path: layer.route.path, key: `${m} ${layer.route.path}` });
      } else if (layer.handle?.stack) walk(layer.handle.stack as never);
    }
  };
  walk((testApp() as unknown as { router: { stack: never[] } }).router.stack);
  return out.filter((r) => r.path.startsWith('/api/'));
}

/** A concrete URL: every parameter gets an id no record has. */
function urlOf(p: string): string {
  return p.replace(/:([A-Za-z0-9_]+)/g, '999999999');
}

let auditor: Agent;
let routes: Mounted[];

beforeAll(async () => {
  ({ agent: auditor } = await agentFor(['auditor']));
  routes = mountedRoutes();
});

describe('the route list', () => {
  it('is complete: the registry and the Express stack agree, and every exception names a real route', () => {
    const keys = new Set(routes.map((r) => r.key));
    const registry = new Set(routeRegistry.map((d) => `${d.method} ${d.path}`));
    expect([...keys].sort()).toEqual([...registry].sort());
    for (const k of [...Object.keys(AUDITOR_MAY_WRITE), ...Object.keys(NOT_FOR_AUDITORS)])
      expect(keys.has(k), `${k} is listed as an exception but no longer exists`).toBe(true);
    expect(routes.filter((r) => r.method !== 'get').length).toBeGreaterThan(20);
  });
});

describe('an auditor-only account cannot write', () => {
  it('every write route answers 403 FORBIDDEN, and nothing is written', async () => {
    const writes = routes.filter((r) => r.method !== 'get' && !(r.key in AUDITOR_MAY_WRITE));
    const headBefore = (await db()('audit_head').where({ id: 1 }).first())!;
    const wrong: string[] = [];
    for (const r of writes) {
      const res = await (auditor as unknown as Record<string, (u: string) => request.Test>)
        [r.method](urlOf(r.path))
        .send({});
      if (res.status !== 403 || res.body?.error?.code !== 'FORBIDDEN')
        wrong.push(`${r.key} -> ${res.status} ${res.body?.error?.code ?? ''}`);
    }
    expect(wrong, 'write routes an auditor could call').toEqual([]);
    // Every write in Drumline is audited: an unchanged head means nothing was written.
    const headAfter = (await db()('audit_head').where({ id: 1 }).first())!;
    expect(Number(headAfter.last_id)).toBe(Number(headBefore.last_id));
    console.log(`[auditor-readonly] ${writes.length} write routes refused`);
  });

  it('the same requests from a role the route allows are NOT refused (the 403 above is the role check, not a broken URL)', async () => {
    const agents = new Map<Role, Agent>();
    const refused: string[] = [];
    let checked = 0;
    for (const r of routes.filter((x) => x.method !== 'get' && !(x.key in AUDITOR_MAY_WRITE))) {
      const def = routeRegistry.find((d) => `${d.method} ${d.path}` === r.key)!;
      if (def.access === 'public' || def.access === 'authenticated' || 'machine' in def.access) continue; // must be an exception, or the test above fails
      const role = def.access.roles[0];
      if (!agents.has(role)) agents.set(role, (await agentFor([role])).agent);
      const res = await (agents.get(role) as unknown as Record<string, (u: string) => request.Test>)
        [r.method](urlOf(r.path))
        .send({});
      checked++;
      if (res.status === 403 && res.body?.error?.code === 'FORBIDDEN') refused.push(`${r.key} refused for ${role}`);
      if (res.status === 401) refused.push(`${r.key} -> 401 for ${role}`);
    }
    expect(refused).toEqual([]);
    expect(checked).toBeGreaterThan(20);
  });

  it('the role list of the app has not grown a role this test does not know', () => {
    expect([...ROLES].sort()).toEqual(['admin', 'auditor', 'operator', 'qa_manager', 'verifier']);
  });
});

describe('the exceptions do what their reason says', () => {
  it('sign-in and sign-out work for an auditor', async () => {
    const u = await makeUser(['auditor']);
    const agent = request.agent(testApp());
    expect((await agent.post('/api/auth/sign-in').send({ username: u.username, password: u.password })).status).toBe(
      200,
    );
    expect((await agent.post('/api/auth/sign-out')).status).toBe(204);
    expect((await agent.get('/api/auth/me')).status).toBe(401);
  });

  it('an auditor changes their own password', async () => {
    const { agent, user } = await agentFor(['auditor']);
    const res = await agent
      .post('/api/auth/password')
      .send({ currentPassword: user.password, newPassword: 'auditor-new-password-2026' });
    expect(res.status).toBe(204);
    const again = request.agent(testApp());
    expect(
      (await again.post('/api/auth/sign-in').send({ username: user.username, password: 'auditor-new-password-2026' }))
        .status,
    ).toBe(200);
  });
});

describe('an auditor can open every record', () => {
  it('every read route is open to the auditor (404 for ids that do not exist is fine; 401/403 is not)', async () => {
    const reads = routes.filter((r) => r.method === 'get' && !(r.key in NOT_FOR_AUDITORS));
    const closed: string[] = [];
    for (const r of reads) {
      const res = await auditor.get(urlOf(r.path)).query(SWEEP_QUERY[r.key] ?? {});
      if (res.status === 401 || res.status === 403)
        closed.push(`${r.key} -> ${res.status} ${res.body?.error?.code ?? ''}`);
    }
    expect(closed, 'read routes closed to auditors').toEqual([]);
    // and the listed exceptions are indeed closed (so the list does not hide an open route)
    for (const k of Object.keys(NOT_FOR_AUDITORS)) {
      const res = await auditor.get(urlOf(k.slice(4)));
      expect([403, 404], k).toContain(res.status);
    }
    console.log(
      `[auditor-readonly] ${reads.length} read routes open, ${Object.keys(NOT_FOR_AUDITORS).length} closed with a reason`,
    );
  });
});

describe('an auditor downloads raw spectrum files and certificates', () => {
  const fixtures = path.join(path.dirname(new URL(import.meta.url).pathname), 'fixtures-certificates.ts');
  const needed = [
    'get /api/measurements/:id/file',
    'get /api/references/:id/file',
    'get /api/instruments/:id/checks/:checkId/file',
    'get /api/certificates/:id/pdf',
  ];

  it('raw files byte for byte (SHA-256 as stored), the signed certificate PDF, and its verification by upload', async () => {
    const missing = needed.filter((k) => !routes.some((r) => r.key === k));
    if (missing.length || !fs.existsSync(fixtures)) {
      console.warn(
        `[auditor-readonly] SKIPPED downloads: routes not mounted yet: ${missing.join(', ') || '(none)'}; fixtures present: ${fs.existsSync(fixtures)}`,
      );
      return;
    }
    const { createPassedLot } = await import('./fixtures-certificates');
    const { issueCertificate } = await import('../../server/modules/certificates');
    const lot = await createPassedLot(db(), { containers: 2 });
    const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');
    const binary = (res: request.Response, cb: (err: Error | null, body: Buffer) => void) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => cb(null, Buffer.concat(chunks)));
    };

    // measurement raw files
    for (const c of lot.containers) {
      const res = await auditor.get(`/api/measurements/${c.measurementId}/file`).buffer(true).parse(binary);
      expect(res.status).toBe(200);
      expect(sha(res.body as Buffer)).toBe(c.fileSha256);
    }
    // the reference spectrum's raw file
    const ref = (await db()('reference_spectrum').where({ code: lot.referenceCode }).first())!;
    const refFile = (await db()('stored_file').where({ id: ref.file_id }).first())!;
    const r1 = await auditor.get(`/api/references/${ref.id}/file`).buffer(true).parse(binary);
    expect(r1.status).toBe(200);
    expect(sha(r1.body as Buffer)).toBe(refFile.sha256);
    // the instrument check's polystyrene file
    const m = (await db()('measurement').where({ id: lot.containers[0].measurementId }).first())!;
    const check = (await db()('instrument_check').where({ id: m.instrument_check_id }).first())!;
    const checkFile = (await db()('stored_file').where({ id: check.file_id }).first())!;
    const r2 = await auditor
      .get(`/api/instruments/${check.instrument_id}/checks/${check.id}/file`)
      .buffer(true)
      .parse(binary);
    expect(r2.status).toBe(200);
    expect(sha(r2.body as Buffer)).toBe(checkFile.sha256);

    // the certificate PDF, exactly as stored
    const meta = await issueCertificate(db(), {
      lotId: lot.lotId,
      testId: lot.testId,
      actor: { id: null, name: 'Drumline (system)' },
    });
    const stored = (await db()('certificate').where({ id: meta.id }).first())!;
    const pdf = await auditor.get(`/api/certificates/${meta.id}/pdf`).buffer(true).parse(binary);
    expect(pdf.status).toBe(200);
    expect(pdf.headers['content-type']).toBe('application/pdf');
    expect(sha(pdf.body as Buffer)).toBe(stored.sha256);
    // and the auditor may check it by upload (the POST exception above)
    const v = await auditor.post('/api/certificates/verify').attach('file', pdf.body as Buffer, 'certificate.pdf');
    expect(v.status).toBe(200);
    expect(v.body.verdict).toBe('authentic');
    // the lot, its test and measurements open as records
    expect((await auditor.get(`/api/lots/${lot.lotId}`)).status).toBe(200);
    expect((await auditor.get(`/api/tests/${lot.testId}`)).status).toBe(200);
    expect((await auditor.get(`/api/measurements/${lot.containers[0].measurementId}`)).status).toBe(200);
    expect((await auditor.get(`/api/certificates/${meta.id}`)).status).toBe(200);
  });
});
