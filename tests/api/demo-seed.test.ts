/**
 * The demo seed on a fresh database of its own (not the shared API test database): every lot
 * state of the scenario exists and is consistent, every passed lot has a certificate that
 * verifies, every failed lot an investigation whose library hint names what is really in the
 * container, the library is specific after the tightened citric acid methods, references are
 * approved by someone other than their uploader, and the audit chain is intact. Running the
 * seed again changes nothing (idempotent).
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { migrateDatabase, dropDatabase, recreateDatabase } from '../../db/migrate';
import { DEMO_ACCOUNTS, seedAccounts, DEMO_PASSWORD } from '../../db/seeds/accounts';
import { DEMO_TREND, NEW_HIRE, ROLE_REQUEST, seedDemoSite } from '../../db/seeds/demo';
import { MATERIALS, materialByKey } from '../../fixtures/band-lists';
import { DEMO_LOTS, type LotState } from '../../fixtures/catalogue';
import { LOOK_ALIKE_PAIR } from '../../fixtures/demo-methods';
import { createApp } from '../../server/app';
import { verifyChain } from '../../server/lib/audit';
import { closeDb, initDb } from '../../server/lib/db';
import { specificityMatrixFor } from '../../server/modules/library/specificity';
import type { Knex } from 'knex';
import type { LotRow, MeasurementRow, RoleRequestRow, SourceStatusRow } from '../../server/lib/db-tables';

const DEMO_DB = `drumline_demo_test_${process.pid}`;
let db: Knex;
let counts: Record<string, number>;

const TABLES = [
  'material',
  'identity_method',
  'reference_spectrum',
  'instrument',
  'instrument_check',
  'lot',
  'identity_test',
  'measurement',
  'investigation',
  'certificate',
  'e_signature',
  'audit_event',
];

async function tableCounts(): Promise<Record<string, number>> {
  const out: Record<string, number> = {};
  for (const t of TABLES) out[t] = Number((await db(t).count({ n: '*' }).first())?.n ?? 0);
  return out;
}

const IDENTITY_STATUS: Record<LotState, string> = {
  'awaiting-testing': 'awaiting-testing',
  'partly-tested': 'testing',
  'awaiting-verification': 'awaiting-verification',
  passed: 'passed',
  'failed-open-investigation': 'failed',
  'rejected-after-investigation': 'rejected',
};

beforeAll(async () => {
  await recreateDatabase(DEMO_DB);
  await migrateDatabase(DEMO_DB); // also grants the runtime account its rights on this database
  db = initDb(DEMO_DB);
  await seedAccounts(DEMO_DB);
  const r = await seedDemoSite(db, { database: DEMO_DB, log: () => undefined });
  expect(r.seeded).toBe(true);
  counts = await tableCounts();
}, 600_000);

afterAll(async () => {
  await closeDb();
  if (!process.env.KEEP_TEST_DB) await dropDatabase(DEMO_DB);
});

/** The seeded lot of a catalogue entry (the seed writes every one). */
async function lotOf(key: string): Promise<LotRow> {
  const l = DEMO_LOTS.find((x) => x.key === key)!;
  const m = materialByKey(l.material);
  return (await db('lot as l')
    .join('material as m', 'm.id', 'l.material_id')
    .where({ 'm.code': m.code, 'l.supplier_lot': l.supplierLot })
    .select<LotRow[]>('l.*')
    .first())!;
}

describe('demo seed', () => {
  it('creates every demo grade with an approved method and three approved references, written and uploaded by one QA manager, approved by another with a validation record; sodium chloride is marked "identity by IR not suitable"', async () => {
    const quinn = (await db('app_user').where({ username: 'quinn' }).first())!;
    const irene = (await db('app_user').where({ username: 'irene' }).first())!;
    for (const m of MATERIALS) {
      const mat = (await db('material').where({ code: m.code }).first())!;
      expect(mat, m.code).toBeTruthy();
      const approved = await db('identity_method').where({ material_id: mat.id, status: 'approved' });
      if (m.key === 'sodium-chloride') {
        // no IR method, no reference: the decision that replaces them, signed by QA
        expect(approved, m.code).toHaveLength(0);
        const d = (await db('material_ir_suitability').where({ material_id: mat.id }).orderBy('id', 'desc').first())!;
        expect(d).toMatchObject({ suitable: 0, decided_by: quinn.id });
        expect(d.replacement_test).toMatch(/sodium and of chlorides/);
        continue;
      }
      expect(approved, m.code).toHaveLength(1);
      for (const v of await db('identity_method').where({ material_id: mat.id }).whereNot({ status: 'draft' })) {
        expect(v.created_by, m.code).toBe(irene.id);
        const s = (await db('e_signature').where({ id: v.approved_signature_id! }).first())!;
        expect(s.user_id, m.code).toBe(quinn.id);
        // the validation record was stored with the approval and its SHA-256 signed
        const a = (await db('method_approval').where({ method_id: v.id }).first())!;
        expect(a, `${m.code} v${v.version}`).toBeTruthy();
        const f = (await db('stored_file').where({ id: a.validation_file_id }).first())!;
        expect(f.media_type).toBe('application/pdf');
        expect(f.sha256).toBe(a.validation_sha256);
      }
      const refs = await db('reference_spectrum').where({ material_id: mat.id, status: 'approved' });
      expect(refs.length, m.code).toBe(3);
      for (const r of refs) {
        expect(r.created_by).toBe(irene.id);
        const s = (await db('e_signature').where({ id: r.approved_signature_id! }).first())!;
        expect(s.user_id).toBe(quinn.id);
        expect(s.meaning).toBe('approved');
      }
    }
    // One draft reference waits for approval (by someone other than its uploader).
    const drafts = await db('reference_spectrum').where({ status: 'draft' });
    expect(drafts).toHaveLength(1);
    expect(drafts[0].created_by).toBe(irene.id);
  });

  it('shows the look-alike pair refused by the specificity gate, then the methods tightened and the library specific with its margins', async () => {
    const mh = (await db('material')
      .where({ code: materialByKey(LOOK_ALIKE_PAIR[1]).code })
      .first())!;
    const mhFirst = (await db('identity_method').where({ material_id: mh.id, version: 1 }).first())!;
    const blocked = await db('audit_event').where({ action: 'method.approval-blocked' });
    expect(blocked).toHaveLength(1);
    expect(Number(blocked[0].entity_id)).toBe(mhFirst.id);
    const offending = (JSON.parse(blocked[0].after_json!) as { offending: { otherMaterialCode: string }[] }).offending;
    expect(new Set(offending.map((o) => o.otherMaterialCode))).toEqual(
      new Set([materialByKey(LOOK_ALIKE_PAIR[0]).code]),
    );
    const expected: Record<string, string[]> = {
      [LOOK_ALIKE_PAIR[0]]: ['1:superseded', '2:approved'],
      [LOOK_ALIKE_PAIR[1]]: ['1:approved'],
    };
    for (const key of LOOK_ALIKE_PAIR) {
      const mat = (await db('material')
        .where({ code: materialByKey(key).code })
        .first())!;
      const methods = await db('identity_method').where({ material_id: mat.id }).orderBy('version');
      expect(methods.map((x) => `${x.version}:${x.status}`)).toEqual(expected[key]);
      expect(JSON.parse(methods.at(-1)!.params).bandTolerance).toEqual({ mode: 'absolute', cm1: 3 });
    }
    const matrix = await specificityMatrixFor('mid-ir-atr', db);
    const irCodes = MATERIALS.filter((m) => m.key !== 'sodium-chloride').map((m) => m.code);
    expect(matrix.materials.map((m) => m.code).sort()).toEqual([...irCodes].sort());
    expect(matrix.notDiscriminated).toEqual([]);
    // Every grade's references pass against each other (leave one out).
    for (const c of matrix.cells.filter((x) => x.rowMaterialId === x.columnMaterialId))
      expect(c.state, String(c.rowMaterialId)).toBe('self');
  });

  it('refuses an IR test of the sodium chloride lot (identity by IR not suitable)', async () => {
    const app = createApp({ database: DEMO_DB }).app;
    const agent = request.agent(app);
    await agent.post('/api/auth/sign-in').send({ username: 'olga', password: DEMO_PASSWORD }).expect(200);
    const lot = await lotOf('I');
    const inst = (await db('instrument').orderBy('id').first())!;
    const res = await agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId: inst.id });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('IR_NOT_SUITABLE');
    expect(await db('identity_test').where({ lot_id: lot.id }).first()).toBeUndefined();
  });

  it('has three instruments with the site ATR check positions, one of them with its check due', async () => {
    const app = createApp({ database: DEMO_DB }).app;
    const agent = request.agent(app);
    await agent.post('/api/auth/sign-in').send({ username: 'quinn', password: DEMO_PASSWORD }).expect(200);
    const list = (await agent.get('/api/instruments').expect(200)).body as {
      name: string;
      checkDue: boolean;
      currentSpec: { kind: string } | null;
    }[];
    expect(list).toHaveLength(3);
    for (const i of list) expect(i.currentSpec?.kind).toBe('site');
    expect(list.filter((i) => i.checkDue).map((i) => i.name)).toEqual(['FTIR 3 - dispensary']);
    const failed = await db('instrument_check').where({ verdict: 'fail' });
    expect(failed).toHaveLength(1);
    // every instrument qualified (IQ, OQ, PQ, signed by QA); FTIR 3's failed check opened its look-back
    expect(await db('instrument_qualification').where({ status: 'passed' })).toHaveLength(9);
    const open = (await agent.get('/api/impact-assessments?status=open').expect(200)).body as {
      instrumentName: string;
      instrumentCheckId: number;
    }[];
    expect(open.map((a) => [a.instrumentName, a.instrumentCheckId])).toEqual([['FTIR 3 - dispensary', failed[0].id]]);
  });

  it('leaves every lot in its scenario state, consistently', async () => {
    const seen = new Set<string>();
    for (const l of DEMO_LOTS) {
      const lot = await lotOf(l.key);
      expect(lot, l.key).toBeTruthy();
      expect(lot.identity_status, l.key).toBe(IDENTITY_STATUS[l.state]);
      seen.add(l.state);
      const tests = await db('identity_test').where({ lot_id: lot.id });
      const containers = await db('container').where({ lot_id: lot.id });
      expect(containers).toHaveLength(l.containers);
      const measurements = tests.length
        ? await db('measurement').whereIn(
            'test_id',
            tests.map((t) => t.id),
          )
        : [];
      switch (l.state) {
        case 'awaiting-testing':
          expect(tests).toHaveLength(0);
          break;
        case 'partly-tested': {
          expect(tests.map((t) => t.status)).toEqual(['in-progress']);
          const valid = new Set(measurements.filter((m) => m.verdict !== 'invalid').map((m) => m.container_id));
          expect(valid.size).toBe(l.measured!.length);
          expect(valid.size).toBeLessThan(l.containers);
          // The poor-contact file is kept as an invalid measurement (refused, not judged).
          expect(measurements.filter((m) => m.verdict === 'invalid')).toHaveLength(1);
          break;
        }
        case 'awaiting-verification':
          expect(tests.map((t) => t.status)).toEqual(['awaiting-verification']);
          expect(tests[0].performed_signature_id).toBeTruthy();
          expect(tests[0].verified_signature_id).toBeNull();
          break;
        default:
          expect(tests.map((t) => t.status)).toEqual(['verified']);
          expect(tests[0].verified_by).not.toBe(tests[0].performed_by);
          expect(new Set(measurements.map((m) => m.container_id)).size).toBe(l.containers);
      }
    }
    expect([...seen].sort()).toEqual(Object.keys(IDENTITY_STATUS).sort());
  });

  it('gives every passed lot a certificate that verifies, and no other lot one', async () => {
    const app = createApp({ database: DEMO_DB }).app;
    const agent = request.agent(app);
    await agent.post('/api/auth/sign-in').send({ username: 'aurelia', password: DEMO_PASSWORD }).expect(200);
    const passedLots = await db('lot').where({ identity_status: 'passed' });
    // the scenario's passed lots and the 40 lots of the synthetic trend history
    const synthetic = passedLots.filter((l) => l.lot_number.startsWith(`${DEMO_TREND.prefix}-`));
    expect(synthetic).toHaveLength(40);
    expect(passedLots.length).toBe(DEMO_LOTS.filter((l) => l.state === 'passed').length + 40);
    for (const lot of passedLots) {
      const certs = await db('certificate').where({ lot_id: lot.id });
      expect(certs, lot.lot_number).toHaveLength(1);
      const res = await agent.get('/api/certificates/verify').query({ number: certs[0].number }).expect(200);
      expect(res.body.verdict, res.body.summary).toBe('authentic');
      expect(res.body.lot.lotNumber).toBe(lot.lot_number);
    }
    const others = await db('certificate').whereNotIn(
      'lot_id',
      passedLots.map((l) => l.id),
    );
    expect(others).toHaveLength(0);
  });

  it('opens an investigation for every failed lot; the library hint names the material really in the container', async () => {
    for (const l of DEMO_LOTS.filter((x) => x.contents)) {
      const lot = await lotOf(l.key);
      const invs = await db('investigation').where({ lot_id: lot.id });
      expect(invs, l.key).toHaveLength(1);
      const inv = invs[0];
      expect(inv.status).toBe(l.state === 'failed-open-investigation' ? 'open' : 'closed');
      if (l.state === 'rejected-after-investigation') {
        expect(inv.decision).toBe('confirmed');
        expect(lot.status).toBe('rejected');
        expect(inv.decision_signature_id).toBeTruthy();
      }
      const failing = JSON.parse(inv.failing) as { label: string; hint: { materialCode: string }[] }[];
      const [seq, inside] = Object.entries(l.contents!)[0];
      expect(failing.map((f) => f.label)).toEqual([`${lot.lot_number}-${String(seq).padStart(3, '0')}`]);
      expect(failing[0].hint[0].materialCode).toBe(materialByKey(inside).code);
    }
    const failedLots = await db('lot').whereIn('identity_status', ['failed', 'rejected']);
    for (const lot of failedLots)
      expect((await db('investigation').where({ lot_id: lot.id })).length, lot.lot_number).toBeGreaterThan(0);
  });

  it('gives operator, verifier and QA manager a non-empty work queue', async () => {
    const app = createApp({ database: DEMO_DB }).app;
    const expected: Record<string, string[]> = {
      olga: ['lots-to-test', 'instrument-checks-due'],
      victor: ['tests-to-verify'],
      dana: ['lots-to-test', 'tests-to-verify'],
      quinn: ['open-investigations', 'lots-awaiting-disposition', 'references-to-approve', 'instrument-checks-due'],
    };
    for (const [username, keys] of Object.entries(expected)) {
      const agent = request.agent(app);
      await agent.post('/api/auth/sign-in').send({ username, password: DEMO_PASSWORD }).expect(200);
      const q = (await agent.get('/api/work-queue').expect(200)).body as { sections: { key: string; count: number }[] };
      for (const k of keys) expect(q.sections.find((s) => s.key === k)?.count, `${username} ${k}`).toBeGreaterThan(0);
    }
  });

  it('has suppliers in each status, a reduced-plan lot with its justification, lots awaiting disposition, a released and a rejected lot, a machine account and a webhook', async () => {
    const statuses = await db('source_status as s')
      .whereRaw('s.id = (SELECT MAX(x.id) FROM source_status x WHERE x.source_id = s.source_id)')
      .select<Pick<SourceStatusRow, 'status' | 'sampling_plan' | 'sampling_justification'>[]>(
        's.status',
        's.sampling_plan',
        's.sampling_justification',
      );
    expect(new Set(statuses.map((x) => x.status))).toEqual(new Set(['new', 'qualified', 'conditional', 'blocked']));
    const reducedSource = statuses.find((x) => x.sampling_plan === 'sqrt-n-plus-1');
    expect(reducedSource?.sampling_justification).toMatch(/Validated reduced sampling/);
    const reducedLot = (await db('lot').where({ sampling_plan: 'sqrt-n-plus-1', container_count: 12 }).first())!;
    expect(reducedLot.sample_count).toBe(5); // ceil(1 + sqrt(12)), WHO TRS 929 Annex 4, 5.1
    expect(
      await db('sampled_container as s')
        .join('sampling_record as r', 'r.id', 's.sampling_record_id')
        .where('r.lot_id', reducedLot.id),
    ).toHaveLength(5);
    // every lot that was tested was sampled first
    const tested = await db('identity_test as t')
      .join('lot as l', 'l.id', 't.lot_id')
      .whereNotNull('l.sampling_plan')
      .distinct<{ lot_id: number }[]>('t.lot_id as lot_id');
    for (const t of tested)
      expect(await db('sampling_record').where({ lot_id: t.lot_id }).first(), `lot ${t.lot_id}`).toBeTruthy();
    expect(await db('lot').where({ status: 'released' }).whereNotNull('retest_date')).toHaveLength(1);
    expect((await db('lot').where({ status: 'rejected' })).length).toBeGreaterThan(0);
    expect((await db('lot').where({ status: 'quarantine', identity_status: 'passed' })).length).toBeGreaterThan(0);
    expect(await db('machine_account').whereNull('revoked_at')).toHaveLength(1);
    expect((await db('webhook_endpoint').first())!.url).toBe('http://127.0.0.1:8090/hooks');
  });

  it('holds a synthetic drifting history of 40 passed results with its open trend signals and a signed audit-trail review', async () => {
    const lots = await db('lot').where('lot_number', 'like', `${DEMO_TREND.prefix}-%`).orderBy('lot_number');
    expect(lots).toHaveLength(40);
    expect(lots.every((l) => /Synthetic trend history/.test(l.notes ?? ''))).toBe(true);
    // past times, weeks before the seed ran (set by the seed only)
    const first = (await db('measurement as m')
      .join('identity_test as t', 't.id', 'm.test_id')
      .where('t.lot_id', lots[0].id)
      .first<Pick<MeasurementRow, 'created_at'> | undefined>('m.created_at'))!;
    expect(Date.now() - new Date(first.created_at).getTime()).toBeGreaterThan(40 * 86_400_000);
    const written = await db('audit_event').where({ action: 'demo.synthetic-history-written' });
    expect(written).toHaveLength(40);
    const signals = await db('trend_signal').where({
      status: 'open',
      scope_kind: 'source',
      scope_value: DEMO_TREND.drifting,
    });
    expect(signals.length).toBeGreaterThan(0);
    const reviews = await db('audit_review');
    expect(reviews).toHaveLength(1);
    const sig = await db('e_signature').where({ entity_type: 'audit_review', entity_id: String(reviews[0].id) });
    expect(sig.map((x) => x.meaning)).toEqual(['audit-trail-reviewed']);
  });

  it('keeps the audit chain intact, with every signature audited', async () => {
    const chain = await verifyChain(db);
    expect(chain.ok, JSON.stringify(chain)).toBe(true);
    const sigs = Number((await db('e_signature').count({ n: '*' }).first())?.n);
    const signedEvents = Number(
      (await db('audit_event').where({ action: 'signature.signed' }).count({ n: '*' }).first())?.n,
    );
    expect(sigs).toBeGreaterThan(40);
    expect(signedEvents).toBe(sigs);
  });

  it('leaves the administrator an account to attend to: a new hire created by adam, not yet signed in', async () => {
    const u = (await db('app_user').where({ username: NEW_HIRE.username }).first())!;
    expect(u.must_change_password).toBe(1);
    const adam = (await db('app_user').where({ username: 'adam' }).first())!;
    const created = (await db('audit_event')
      .where({ action: 'user.created', entity_id: String(u.id) })
      .first())!;
    expect(created.actor_id).toBe(adam.id);
  });

  it('leaves a role change for the second administrator: Adam asked for verifier for Olga, Sigrid confirms', async () => {
    const olga = (await db('app_user').where({ username: 'olga' }).first())!;
    const adam = (await db('app_user').where({ username: 'adam' }).first())!;
    const req = await db('role_request as r')
      .leftJoin('role_decision as d', 'd.request_id', 'r.id')
      .where('r.user_id', olga.id)
      .whereNull('d.id')
      .first<RoleRequestRow | undefined>('r.*');
    expect(req).toMatchObject({ requested_by: adam.id, roles_after: JSON.stringify(ROLE_REQUEST.roles) });
    expect(JSON.parse(olga.roles)).toEqual(['operator']);
    // the demo accounts came through the site-setup path, audited as such
    const setup = await db('audit_event').where({ action: 'user.created-at-site-setup' }).count({ n: '*' }).first();
    expect(Number(setup?.n)).toBe(DEMO_ACCOUNTS.length);
  });

  it('has every demo account, with the roles README lists', async () => {
    for (const a of DEMO_ACCOUNTS) {
      const u = (await db('app_user').where({ username: a.username }).first())!;
      expect(JSON.parse(u.roles)).toEqual(a.roles);
    }
  });

  it('stores no spectrum twice: every measurement, reference and check file is its own acquisition', async () => {
    const used = [
      ...(await db('measurement').select('file_id')),
      ...(await db('reference_spectrum').select('file_id')),
      ...(await db('instrument_check').select('file_id')),
    ].map((r) => r.file_id);
    const shas = await db('stored_file').whereIn('id', used).select('sha256');
    expect(shas.length).toBe(used.length);
    expect(new Set(shas.map((r) => r.sha256)).size).toBe(used.length);
    const fps = await db('spectrum_fingerprint').select('decoded_sha256', 'file_id');
    expect(new Set(fps.map((r) => r.file_id))).toEqual(new Set(used));
    expect(new Set(fps.map((r) => r.decoded_sha256)).size).toBe(fps.length);
  });

  it('does nothing when run again (idempotent)', async () => {
    const before = await tableCounts();
    // Only reads and sign-ins happened since the seed: no record but audit events was added.
    expect({ ...before, audit_event: 0 }).toEqual({ ...counts, audit_event: 0 });
    const r = await seedDemoSite(db, { database: DEMO_DB, log: () => undefined });
    expect(r.seeded).toBe(false);
    expect(await tableCounts()).toEqual(before);
  });
});
