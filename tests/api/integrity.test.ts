/**
 * The integrity sweep (issue 12 item 3 and finding 3; docs/compliance.md, "Integrity sweep";
 * 21 CFR 11.10(a) "the ability to discern invalid or altered records", EU GMP Annex 11 §7.1 data
 * checked for accessibility and accuracy). Tampering is done the way only a database owner can: with
 * the owner account, dropping the protecting trigger for the one statement and putting it back. The
 * sweep (asked for by an auditor, run by the job function), the download, the verifier's review and
 * the verification itself must each notice; QA signs the alert off with an e-signature.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Knex } from 'knex';
import type { IdentityMethodRow } from '../../server/lib/db-tables';
import type request from 'supertest';
import { createHash } from 'node:crypto';
import { sweepTick } from '../../server/modules/integrity/service';
import { createPassedLot, type PassedLot } from './fixtures-certificates';
import { agentFor, db, ownerDb, untyped } from './helpers';

type Agent = Awaited<ReturnType<typeof agentFor>>['agent'];

let owner: Knex;
let lot: PassedLot; // awaiting verification, its first container's file will be changed
let clean: PassedLot; // awaiting verification, untouched
let auditor: Agent;
let qa: Awaited<ReturnType<typeof agentFor>>;
let verifier: Awaited<ReturnType<typeof agentFor>>;

/** Runs `fn` with the owner account while the trigger `name` is away, then puts the trigger back exactly. */
async function withoutTrigger(name: string, fn: () => Promise<unknown>): Promise<void> {
  const [rows] = (await owner.raw(
    'SELECT action_timing AS t, event_manipulation AS e, event_object_table AS tb, action_statement AS b ' +
      'FROM information_schema.triggers WHERE trigger_schema = DATABASE() AND trigger_name = ?',
    [name],
  )) as [{ t: string; e: string; tb: string; b: string }[]];
  const t = rows[0];
  await owner.raw(`DROP TRIGGER ${name}`);
  try {
    await fn();
  } finally {
    await owner.raw(`CREATE TRIGGER ${name} ${t.t} ${t.e} ON ${t.tb} FOR EACH ROW ${t.b}`);
  }
}

const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');

function binary(res: request.Response, cb: (err: Error | null, body: Buffer) => void) {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
}

async function sweep(): Promise<number> {
  const req = await auditor.post('/api/integrity/runs').send({});
  expect(req.status).toBe(202);
  expect(['queued', 'running']).toContain(req.body.status);
  const ran = await sweepTick(db(), 0);
  expect(ran).toBe(req.body.id);
  const runs = await auditor.get('/api/integrity/runs');
  const run = runs.body.find((r: { id: number }) => r.id === ran);
  expect(run).toMatchObject({ status: 'finished', origin: 'request' });
  expect(run.filesChecked).toBe(run.filesTotal);
  return ran!;
}

beforeAll(async () => {
  owner = ownerDb();
  ({ agent: auditor } = await agentFor(['auditor']));
  qa = await agentFor(['qa_manager']);
  verifier = await agentFor(['verifier']);
  lot = await createPassedLot(db(), { containers: 2, stage: 'awaiting-verification' });
  clean = await createPassedLot(db(), { containers: 1, stage: 'awaiting-verification' });
});

afterAll(async () => {
  await owner.destroy();
});

describe('untouched records are intact', () => {
  it('the review of an untouched test hashes what it shows and finds every file and signature matching', async () => {
    const r = await verifier.agent.get(`/api/tests/${clean.testId}/review`);
    expect(r.status).toBe(200);
    expect(r.body.integrity.intact).toBe(true);
    expect(r.body.integrity.files.length).toBeGreaterThanOrEqual(3); // sample, instrument check, reference
    for (const f of r.body.integrity.files) expect(f.actualSha256).toBe(f.storedSha256);
    expect(r.body.integrity.signatures).toEqual([expect.objectContaining({ meaning: 'performed', matches: true })]);
  });
});

describe('a flipped byte in a stored file (owner account)', () => {
  let fileId: number;
  let recorded: string;
  let alertId: number;

  beforeAll(async () => {
    const m = (await db()('measurement').where({ id: lot.containers[0].measurementId }).first())!;
    fileId = m.file_id;
    const f = (await db()('stored_file').where({ id: fileId }).first())!;
    recorded = f.sha256;
    const data = Buffer.from(f.data);
    const i = data.indexOf('.'); // a decimal point in the data becomes a comma: one byte
    data[i] = ','.charCodeAt(0);
    await withoutTrigger('stored_file_no_update', () =>
      untyped(owner, 'stored_file').where({ id: fileId }).update({ data }),
    );
  });

  it('is found by the sweep an auditor asks for: an alert for QA naming the file and the test, audited and mailed', async () => {
    const mailsBefore = Number((await db()('mail_outbox').count({ n: '*' }).first())?.n);
    const runId = await sweep();
    const alert = await db()('integrity_alert')
      .where({ kind: 'file-hash', subject_id: String(fileId) })
      .first();
    expect(alert).toMatchObject({ subject_type: 'stored_file', expected: recorded, found_in: 'sweep', run_id: runId });
    expect(alert!.found).not.toBe(recorded);
    alertId = alert!.id;
    const records = await db()('integrity_alert_record').where({ alert_id: alertId });
    expect(records.map((r) => [r.record_type, r.record_id])).toContainEqual(['identity_test', String(lot.testId)]);
    const ev = await db()('audit_event')
      .where({ action: 'integrity.mismatch-found', entity_id: String(alertId) })
      .first();
    expect(ev).toBeTruthy();
    const mails = await db()('mail_outbox').orderBy('id').offset(mailsBefore);
    expect(
      mails.some((m) => m.to_address === `${qa.user.username}@test.example` && /Integrity alert/.test(m.subject)),
    ).toBe(true);
    // QA's list of open alerts holds it
    const open = await qa.agent.get('/api/integrity/alerts');
    expect(open.body.map((a: { id: number }) => a.id)).toContain(alertId);
  });

  it('a second sweep does not raise it again', async () => {
    await sweep();
    expect(await db()('integrity_alert').where({ kind: 'file-hash', subject_id: String(fileId) })).toHaveLength(1);
  });

  it('the download sends the SHA-256 of the bytes sent, and says they differ from the recorded one', async () => {
    const res = await verifier.agent
      .get(`/api/measurements/${lot.containers[0].measurementId}/file`)
      .buffer(true)
      .parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers['x-content-sha256']).toBe(sha(res.body as Buffer));
    expect(res.headers['x-recorded-sha256']).toBe(recorded);
    expect(res.headers['x-integrity']).toBe('mismatch');
  });

  it('the review page shows the mismatch on the test', async () => {
    const r = await verifier.agent.get(`/api/tests/${lot.testId}/review`);
    expect(r.body.integrity.intact).toBe(false);
    const f = r.body.integrity.files.find((x: { fileId: number }) => x.fileId === fileId);
    expect(f).toMatchObject({ matches: false, storedSha256: recorded });
    expect(r.body.integrity.alerts.map((a: { id: number }) => a.id)).toContain(alertId);
    const onRecord = await auditor.get(`/api/integrity/records/identity_test/${lot.testId}`);
    expect(onRecord.body.map((a: { id: number }) => a.id)).toContain(alertId);
  });

  it('the verifier cannot sign over it, before or after QA signs the alert off', async () => {
    const v = await verifier.agent
      .post(`/api/tests/${lot.testId}/verify`)
      .send({ signature: { username: verifier.user.username, password: verifier.user.password } });
    expect(v.status).toBe(409);
    expect(v.body.error.code).toBe('INTEGRITY_MISMATCH');
    expect(v.body.error.message).toMatch(/Nothing was signed/);
    expect(
      await db()('e_signature').where({
        entity_type: 'identity_test',
        entity_id: String(lot.testId),
        meaning: 'verified',
      }),
    ).toHaveLength(0);
    expect((await db()('identity_test').where({ id: lot.testId }).first())!.status).toBe('awaiting-verification');

    // QA signs the alert off (a wrong password signs nothing; roles are checked)
    expect(
      (
        await auditor
          .post(`/api/integrity/alerts/${alertId}/sign-off`)
          .send({ comment: 'x'.repeat(20), signature: { password: 'p' } })
      ).status,
    ).toBe(403);
    const wrong = await qa.agent.post(`/api/integrity/alerts/${alertId}/sign-off`).send({
      comment: 'Deviation DEV-2026-031 opened',
      signature: { username: qa.user.username, password: 'wrong-password' },
    });
    expect(wrong.status).toBe(401);
    const ok = await qa.agent.post(`/api/integrity/alerts/${alertId}/sign-off`).send({
      comment: 'Deviation DEV-2026-031 opened; container 001 to be re-measured.',
      signature: { username: qa.user.username, password: qa.user.password },
    });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(ok.body.signOff).toMatchObject({
      comment: 'Deviation DEV-2026-031 opened; container 001 to be re-measured.',
    });
    expect(ok.body.signOff.signature.meaning).toBe('integrity-reviewed');
    const open = await qa.agent.get('/api/integrity/alerts');
    expect(open.body.map((a: { id: number }) => a.id)).not.toContain(alertId);
    const again = await qa.agent.post(`/api/integrity/alerts/${alertId}/sign-off`).send({
      comment: 'a second time, for good measure',
      signature: { password: qa.user.password },
    });
    expect(again.status).toBe(409);

    // the bytes still differ: still no verification over them
    const v2 = await verifier.agent
      .post(`/api/tests/${lot.testId}/verify`)
      .send({ signature: { password: verifier.user.password } });
    expect(v2.status).toBe(409);
    expect(v2.body.error.code).toBe('INTEGRITY_MISMATCH');
  });

  it('the sign-off is itself protected: append-only, and only with the reviewer signature of that alert', async () => {
    await expect(db()('integrity_signoff').where({ alert_id: alertId }).delete()).rejects.toMatchObject({
      errno: 1142,
    });
    await expect(
      untyped(db(), 'integrity_alert').where({ id: alertId }).update({ found: recorded }),
    ).rejects.toMatchObject({
      errno: 1142,
    });
  });
});

describe('a changed signed row (owner account)', () => {
  it("an approved method's minimum correlation lowered behind the triggers is found against its approval signature", async () => {
    const m = (await db()('identity_method as m')
      .join('material as x', 'x.id', 'm.material_id')
      .where('x.code', lot.materialCode)
      .first<IdentityMethodRow | undefined>('m.*'))!;
    const params = JSON.parse(m.params);
    params.thresholds.minCorrelation = 0.5;
    await withoutTrigger('identity_method_guard_update', () =>
      owner('identity_method')
        .where({ id: m.id })
        .update({ params: JSON.stringify(params) }),
    );
    await sweep();
    const alert = await db()('integrity_alert')
      .where({ kind: 'signature-content', subject_id: String(m.approved_signature_id) })
      .first();
    expect(alert).toBeTruthy();
    expect(alert!.summary).toMatch(/no longer matches what was signed "approved"/);
    const records = await db()('integrity_alert_record').where({ alert_id: alert!.id });
    expect(records.map((r) => [r.record_type, r.record_id])).toEqual([['identity_method', String(m.id)]]);
  });

  it("a test's performed signature no longer matching its measurement is shown on the review and blocks verification", async () => {
    // the clean lot's signed measurement is turned from pass to fail: what was signed is not what is stored
    const mid = clean.containers[0].measurementId;
    const before = (await db()('measurement').where({ id: mid }).first())!;
    await withoutTrigger('measurement_no_update', () =>
      untyped(owner, 'measurement').where({ id: mid }).update({ verdict: 'fail' }),
    );
    try {
      const r = await verifier.agent.get(`/api/tests/${clean.testId}/review`);
      expect(r.body.integrity.signatures[0]).toMatchObject({ meaning: 'performed', matches: false });
      const v = await verifier.agent
        .post(`/api/tests/${clean.testId}/verify`)
        .send({ signature: { password: verifier.user.password } });
      expect(v.status).toBe(409);
      expect(v.body.error.code).toBe('INTEGRITY_MISMATCH');
    } finally {
      await withoutTrigger('measurement_no_update', () =>
        untyped(owner, 'measurement').where({ id: mid }).update({ verdict: before.verdict }),
      );
    }
    const alert = await db()('integrity_alert')
      .where({ kind: 'signature-content', found_in: 'review' })
      .orderBy('id', 'desc')
      .first();
    expect(alert!.summary).toMatch(/no longer matches what was signed "performed"/);
  });

  it('roles written behind the grant triggers are found', async () => {
    const u = (await db()('app_user').where({ username: verifier.user.username }).first())!;
    await withoutTrigger('app_user_guard_update', () =>
      owner('app_user').where({ id: u.id }).update({ roles: '["verifier","qa_manager"]' }),
    );
    try {
      await sweep();
      const alert = await db()('integrity_alert')
        .where({ kind: 'role-grant', subject_id: String(u.id) })
        .first();
      expect(alert).toMatchObject({ expected: '["verifier"]', found: '["verifier","qa_manager"]' });
    } finally {
      await withoutTrigger('app_user_guard_update', () =>
        owner('app_user').where({ id: u.id }).update({ roles: u.roles }),
      );
    }
  });
});

describe('who may do what', () => {
  it('operators and verifiers neither ask for a sweep nor read the alert list; an administrator neither', async () => {
    const { agent: op } = await agentFor(['operator']);
    const { agent: admin } = await agentFor(['admin']);
    for (const a of [op, verifier.agent, admin]) {
      expect((await a.post('/api/integrity/runs').send({})).status).toBe(403);
      expect((await a.get('/api/integrity/alerts')).status).toBe(403);
    }
    expect((await qa.agent.post('/api/integrity/runs').send({})).status).toBe(202);
    await sweepTick(db(), 0);
  });
});
