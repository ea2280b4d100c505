/**
 * The concurrency suite of issue 13 (items 2 and 3), run against two or more Drumline server
 * processes that share one database (a single MariaDB in `npm test`, a Galera cluster in
 * `npm run test:cluster`). Requests alternate between the servers:
 * - sessions: a session opened on one server is valid on every other;
 * - lot numbering: lots received at once get distinct, consecutive numbers;
 * - audit appends from every process (uploads and signatures of many tests at once);
 * - parallel signing of one test: ten verifiers at once, exactly one signature;
 * - parallel verification of ten lots: every one verified once, ten certificates with distinct,
 *   consecutive numbers, each verifying.
 * The caller checks the whole database afterwards (server/ops/record-checks.ts).
 */
import request from 'supertest';
import type { Knex } from 'knex';
import { expect } from 'vitest';
import { createSiteAccounts } from '../../db/site-accounts';
import { FIBRES, distinctAcquisition, seedApprovedMaterial, seedInstrument } from '../../db/seeds/testing-library';
import { hashPassword } from '../../server/lib/passwords';
import type { Role } from '../../server/lib/contract';

const PASSWORD = 'concurrency-suite-pw-2026';

export interface SuiteContext {
  /** Base URLs of the server processes (at least two). */
  urls: string[];
  /** Runtime and owner connections for fixtures and checks. */
  rt: Knex;
  owner: Knex;
  /** Runs while the parallel uploads are in flight (the cluster test kills a node here). */
  midRun?: () => Promise<void>;
  /** How many tries a request gets when a server answers 503 (a database node went away). */
  tries?: number;
}

export interface SuiteResult {
  lotNumbers: string[];
  certificateNumbers: string[];
  testIds: number[];
  retried503: number;
  /** requests whose connection a server closed mid-body (EPIPE/ECONNRESET) and that were sent again */
  retriedReset: number;
  /** Certificates not issued at verification (issued afterwards through QA's recovery route). */
  pendingCertificates: number;
}

let seq = 0;
const uname = (p: string) => `${p}${Date.now().toString(36)}${++seq}`.toLowerCase();

/** Consecutive numbers PREFIX-YYYY-NNNNN: sorted, each one more than the one before. */
export function consecutive(numbers: string[]): boolean {
  const n = numbers.map((x) => Number(/-(\d+)$/.exec(x)![1])).sort((a, b) => a - b);
  return n.every((v, i) => i === 0 || v === n[i - 1] + 1);
}

export async function runConcurrencySuite(ctx: SuiteContext): Promise<SuiteResult> {
  const { urls, rt, owner } = ctx;
  const tries = ctx.tries ?? 1;
  let retried503 = 0;
  let retriedReset = 0;
  const server = (i: number) => urls[i % urls.length];

  // Accounts through the site-setup path (as tests/api/helpers.ts makeUser does).
  const hash = await hashPassword(PASSWORD);
  const mk = async (roles: Role[]) => {
    const username = uname(roles[0].replace('_', ''));
    const ids = await createSiteAccounts(
      owner,
      [{ username, fullName: `Suite ${username}`, email: `${username}@test.example`, roles }],
      { passwordHash: () => hash, mustChangePassword: false, reason: 'concurrency suite account', audit: false },
    );
    return { id: ids.get(username)!, username, fullName: `Suite ${username}` };
  };
  const qa = await mk(['qa_manager']);
  const author = await mk(['qa_manager']); // methods are written by another person than their approver
  const material = await seedApprovedMaterial(rt, qa, {
    author,
    code: uname('CS').toUpperCase().slice(0, 30),
    name: 'Nylon 6,6 yarn (concurrency suite)',
    referenceFiles: [FIBRES.nylon66Reference],
  });
  const { instrumentId } = await seedInstrument(rt, qa, { name: uname('FTIR-CS-'), state: 'valid' });
  const operator = await mk(['operator']);
  // One after the other: site setup is a one-time command, not a concurrent path.
  const verifiers: Awaited<ReturnType<typeof mk>>[] = [];
  for (let i = 0; i < 10; i++) verifiers.push(await mk(['verifier']));

  // A request to server i, again on another server while one answers 503 (its database node is gone).
  async function call(i: number, send: (base: string) => request.Test): Promise<request.Response> {
    let res: request.Response | undefined;
    for (let t = 0; t < tries; t++) {
      try {
        res = await send(server(i + t));
      } catch (e) {
        // A server whose database node is gone may answer 503 and close the connection before a
        // multipart body is fully sent: the client then sees EPIPE or ECONNRESET, not the answer.
        const code = (e as { code?: string }).code;
        if (tries === 1 || (code !== 'EPIPE' && code !== 'ECONNRESET')) throw e;
        retriedReset++;
        await new Promise((r) => setTimeout(r, 500));
        continue;
      }
      if (res.status !== 503) return res;
      retried503++;
      await new Promise((r) => setTimeout(r, 500));
    }
    return res!;
  }
  async function signIn(i: number, u: { username: string }): Promise<string> {
    const res = await call(i, (b) =>
      request(b).post('/api/auth/sign-in').send({ username: u.username, password: PASSWORD }),
    );
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    return String(res.headers['set-cookie']).split(';')[0];
  }
  const sig = (u: { username: string }) => ({ username: u.username, password: PASSWORD });

  // Sessions live in the database: signed in on server 0, known on server 1.
  const opCookie = await signIn(0, operator);
  const me = await request(server(1)).get('/api/auth/me').set('Cookie', opCookie);
  expect(me.status).toBe(200);
  expect(me.body.user.username).toBe(operator.username);

  // A qualified source of the material, set up by QA (a receipt names an approved source).
  const qaCookie = await signIn(0, qa);
  const sup = await request(server(0))
    .post('/api/suppliers')
    .set('Cookie', qaCookie)
    .send({ name: uname('Brightwater Fibres '), kind: 'supplier', signature: sig(qa) });
  expect(sup.status, JSON.stringify(sup.body)).toBe(201);
  const src = await request(server(0))
    .post('/api/sources')
    .set('Cookie', qaCookie)
    .send({
      materialId: material.materialId,
      supplierId: sup.body.id,
      reason: 'approved for the suite',
      signature: sig(qa),
    });
  expect(src.status, JSON.stringify(src.body)).toBe(201);
  const qualified = await request(server(0))
    .post(`/api/sources/${src.body.id}/status`)
    .set('Cookie', qaCookie)
    .send({
      status: 'qualified',
      samplingPlan: 'every-container',
      samplingJustification: null,
      conditions: null,
      effectiveFrom: new Date().toISOString().slice(0, 10),
      reason: 'qualified for the suite',
      signature: sig(qa),
    });
  expect(qualified.status, JSON.stringify(qualified.body)).toBe(200);

  // Lot numbering: eleven lots received at once on both servers.
  const today = new Date().toISOString().slice(0, 10);
  const lots = await Promise.all(
    Array.from({ length: 11 }, (_, i) =>
      call(i, (b) =>
        request(b)
          .post('/api/lots')
          .set('Cookie', opCookie)
          .send({
            materialId: material.materialId,
            supplierId: sup.body.id,
            supplierLot: `CS-${i}`,
            containerCount: 1,
            receivedDate: today,
          }),
      ),
    ),
  );
  for (const l of lots) expect(l.status, JSON.stringify(l.body)).toBe(201);
  const lotNumbers = lots.map((l) => l.body.lotNumber as string);
  expect(new Set(lotNumbers).size).toBe(11);
  expect(consecutive(lotNumbers), lotNumbers.join(' ')).toBe(true);

  // Tests started, measured and signed performed at once on both servers (audit appends from both).
  const samples = FIBRES.nylon66Samples;
  const mid = ctx.midRun ? new Promise((r) => setTimeout(r, 300)).then(ctx.midRun) : Promise.resolve();
  const testIds = await Promise.all(
    lots.map(async (l, i) => {
      // sampling precedes testing: the operator's signed line clearance and sampling record
      const clear = await call(i, (b) =>
        request(b)
          .post(`/api/lots/${l.body.id}/line-clearance`)
          .set('Cookie', opCookie)
          .send({ area: 'Sampling booth 1', previousUse: 'empty, cleaned', signature: sig(operator) }),
      );
      expect(clear.status, JSON.stringify(clear.body)).toBe(201);
      const sampled = await call(i, (b) =>
        request(b)
          .post(`/api/lots/${l.body.id}/sampling`)
          .set('Cookie', opCookie)
          .send({
            lineClearanceId: clear.body.clearances.at(-1).id,
            sampledAt: new Date().toISOString(),
            tool: 'stainless steel sampling spear ST-04, cleaned',
            containers: [{ containerId: l.body.containers[0].id, opened: true, sampled: true, resealed: true }],
            reserve: { quantity: 50, unit: 'g', location: 'Reserve sample store, shelf R2' },
            signature: sig(operator),
          }),
      );
      expect(sampled.status, JSON.stringify(sampled.body)).toBe(201);
      const started = await call(i, (b) =>
        request(b).post(`/api/lots/${l.body.id}/tests`).set('Cookie', opCookie).send({ instrumentId }),
      );
      expect(started.status, JSON.stringify(started.body)).toBe(201);
      const testId = started.body.id as number;
      const f = distinctAcquisition(samples[i % samples.length]); // every upload a new acquisition (docs/provenance.md)
      const up = await call(i + 1, (b) =>
        request(b)
          .post(`/api/tests/${testId}/measurements`)
          .set('Cookie', opCookie)
          .field('containerId', String(l.body.containers[0].id))
          .attach('file', f.buffer, { filename: f.name, contentType: 'text/csv' }),
      );
      expect(up.status, JSON.stringify(up.body)).toBe(201);
      expect(up.body.verdict).toBe('pass');
      const done = await call(i, (b) =>
        request(b)
          .post(`/api/tests/${testId}/perform`)
          .set('Cookie', opCookie)
          .send({ signature: sig(operator) }),
      );
      expect(done.status, JSON.stringify(done.body)).toBe(200);
      return testId;
    }),
  );
  await mid;

  // Parallel signing of one test: ten verifiers at once, alternating servers; exactly one wins.
  const cookies = await Promise.all(verifiers.map((v, i) => signIn(i, v)));
  const one = testIds[0];
  const race = await Promise.all(
    verifiers.map((v, i) =>
      call(i, (b) =>
        request(b)
          .post(`/api/tests/${one}/verify`)
          .set('Cookie', cookies[i])
          .send({ signature: sig(v) }),
      ),
    ),
  );
  expect(race.map((r) => r.status).sort()).toEqual([200, ...Array(9).fill(409)]);
  expect(
    await rt('e_signature').where({ entity_type: 'identity_test', entity_id: String(one), meaning: 'verified' }),
  ).toHaveLength(1);

  // Parallel verification of ten lots: verifier i verifies lot i+1, alternating servers.
  const verified = await Promise.all(
    testIds.slice(1).map((testId, i) =>
      call(i, (b) =>
        request(b)
          .post(`/api/tests/${testId}/verify`)
          .set('Cookie', cookies[i])
          .send({ signature: sig(verifiers[i]) }),
      ),
    ),
  );
  for (const v of verified) expect(v.status, JSON.stringify(v.body)).toBe(200);

  const lotIds = lots.map((l) => l.body.id as number);
  const passed = await rt('lot').whereIn('id', lotIds).select('id', 'identity_status', 'certificate_id');
  expect(passed.every((l) => l.identity_status === 'passed')).toBe(true);
  // A certificate that could not be issued at once stays pending (docs/certificates.md); QA's
  // recovery route issues it. Counted, so the closing note can say how often it happened.
  const pendingLots = passed.filter((l) => !l.certificate_id).map((l) => Number(l.id));
  if (pendingLots.length) {
    const qaCookie = await signIn(0, qa);
    for (const [i, lotId] of pendingLots.entries()) {
      const res = await call(i, (b) =>
        request(b).post('/api/certificates/issue').set('Cookie', qaCookie).send({ lotId }),
      );
      expect([200, 201], JSON.stringify(res.body)).toContain(res.status);
    }
  }
  const certs = await rt('certificate').whereIn('lot_id', lotIds).select('number', 'lot_id');
  expect(certs).toHaveLength(11);
  expect(new Set(certs.map((c) => c.lot_id)).size).toBe(11);
  const certificateNumbers = certs.map((c) => c.number);
  expect(new Set(certificateNumbers).size).toBe(11);
  // No missing number either (soft: the other checks still run and report when this fails).
  expect.soft(consecutive(certificateNumbers), `certificate numbers: ${certificateNumbers.join(' ')}`).toBe(true);
  for (const testId of testIds)
    expect(
      await rt('e_signature').where({ entity_type: 'identity_test', entity_id: String(testId), meaning: 'verified' }),
    ).toHaveLength(1);
  return { lotNumbers, certificateNumbers, testIds, retried503, retriedReset, pendingCertificates: pendingLots.length };
}
