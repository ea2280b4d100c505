/**
 * What protects what in the database itself (docs/compliance.md, "What protects what"; issue 12
 * item 2). Every claim of that section is tried here with the forbidden statement, through the
 * runtime account the server uses (and, for the triggers, through the owner account too):
 * - the classification: every table is append-only, guarded or operational, with the matching
 *   grants and triggers, so a table added later fails here until it is classified;
 * - the three changes the probe of issue 12 got through (an approved method's minimum correlation
 *   set to 0, an approved reference's bands emptied, a failed instrument check turned into a pass);
 * - append-only tables refuse UPDATE and DELETE; guarded records refuse deletion and every change
 *   outside their permitted transitions; signature columns only take a signature of the same record.
 */
import path from 'node:path';
import os from 'node:os';
import fs from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Knex } from 'knex';
import { appendOnlyTables, guardedTables, operationalTables } from '../../db/migrations/index';
import { runtimePrivileges } from '../../db/migrate';
import { guardTriggerName } from '../../db/protect';
import { issueCertificate } from '../../server/modules/certificates';
import { loadConfig } from '../../server/lib/config';
import { writeCheckpoint } from '../../server/modules/audit/anchor';
import { raiseAlert } from '../../server/modules/integrity/service';
import { createPassedLot, type PassedLot } from './fixtures-certificates';
import {
  agent,
  approvedMaterial,
  FIBRES,
  fixtureQaAgent,
  receiveLot,
  instrumentWithCheck,
  profileFor,
  retire,
  supplierFor,
  type ApprovedMaterial,
} from './fixtures-testing';
import { agentFor, db, makeUser, ownerDb } from './helpers';
import { contentHash } from '../../server/lib/esign';
import type { StoredFileRow } from '../../server/lib/db-tables';
import { methodSignedContent } from '../../server/modules/library/service';
import { irSuitabilitySignedContent, overrideSignedContent } from '../../server/modules/library/method-control';

let owner: Knex;
let material: ApprovedMaterial;
let failedCheck: { instrumentId: number; checkId: number | null };
let lot: PassedLot;
let certificateId: number;

const NO_PRIVILEGE = { errno: 1142 }; // ER_TABLEACCESS_DENIED_ERROR: the runtime account holds no such right
const REFUSED = { errno: 1644 }; // ER_SIGNAL_EXCEPTION: a protection trigger said no (SQLSTATE 45000)

beforeAll(async () => {
  owner = ownerDb();
  material = await approvedMaterial({ name: 'Nylon 6,6 (protection test)', referenceFiles: [FIBRES.nylon66Reference] });
  failedCheck = await instrumentWithCheck('failed');
  // a supplier, a source of the material and its status history (supplier master, issue 14)
  await supplierFor(material.materialId, { status: 'blocked' });
  await profileFor(material.materialId);
  // a sampled lot with a recorded check, rejected by QA: rows in the sampling and disposition tables
  const sampler = await agent(['operator']);
  const sampled = await receiveLot(sampler.agent, material.materialId, 1);
  const qaDisp = await fixtureQaAgent();
  const chk = await qaDisp.agent.post(`/api/lots/${sampled.id}/checks`).send({
    checkKey: 'appearance',
    outcome: 'does-not-conform',
    signature: { username: qaDisp.user.username, password: qaDisp.user.password },
  });
  expect(chk.status).toBe(201);
  const rej = await qaDisp.agent.post(`/api/lots/${sampled.id}/reject`).send({
    reason: 'Appearance out of specification (protection test).',
    signature: { username: qaDisp.user.username, password: qaDisp.user.password },
  });
  expect(rej.status).toBe(200);
  lot = await createPassedLot(db(), { containers: 2 });
  {
    // a released lot and the start of its retest (db/migrations/145_retest.ts), for the append-only probe
    const rl = await createPassedLot(db(), { containers: 1 });
    const sigRow = (meaning: string) => ({
      user_id: rl.operator.id,
      printed_name: 'probe',
      meaning,
      entity_type: 'lot',
      entity_id: String(rl.lotId),
      content_hash: '0'.repeat(64),
      signed_at: new Date(),
    });
    const [relSig] = await db()('e_signature').insert(sigRow('released'));
    const [dispId] = await db()('lot_disposition').insert({
      lot_id: rl.lotId,
      decision: 'released',
      retest_date: '2030-01-01',
      conditions: '[]',
      signature_id: relSig,
      decided_by: rl.operator.id,
      decided_at: new Date(),
    });
    await db()('lot')
      .where({ id: rl.lotId })
      .update({ status: 'released', disposition_id: dispId, retest_date: '2030-01-01' });
    const [retSig] = await db()('e_signature').insert(sigRow('retest-started'));
    const retest = {
      lot_id: rl.lotId,
      reopened_disposition_id: dispId,
      retest_date_due: '2030-01-01',
      reason: 'probe retest of the protection test',
      signature_id: retSig,
      started_by: rl.operator.id,
      started_at: new Date(),
    };
    await db()('lot_retest').insert(retest);
    // the same release is reopened once only
    await expect(db()('lot_retest').insert(retest)).rejects.toThrow(/Duplicate/);
  }
  certificateId = (
    await issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: { id: null, name: 't' } })
  ).id;
  // provenance rows (docs/provenance.md) of the passed lot's first measurement
  const ms = (await db()('measurement').where({ test_id: lot.testId }).orderBy('id').first())!;
  const t = (await db()('identity_test').where({ id: lot.testId }).first())!;
  const provAt = new Date();
  await db()('spectrum_fingerprint').insert({
    file_id: ms.file_id,
    record_type: 'measurement',
    record_id: ms.id,
    raw_sha256: '1'.repeat(64),
    decoded_sha256: '2'.repeat(64),
    points: 10,
    x_low: 600,
    x_high: 4000,
    seg1: 0.1,
    seg2: 0.1,
    seg3: 0.1,
    seg4: 0.1,
    noise: 0.001,
    y_range: 1,
    y_step: 0,
    created_at: provAt,
  });
  await db()('measurement_provenance').insert({
    measurement_id: ms.id,
    acquired_judgement: 'not-stated',
    serial_judgement: 'not-stated',
    identifier_findings: '[]',
    created_at: provAt,
  });
  await db()('test_handover').insert({
    test_id: lot.testId,
    from_user: t.created_by,
    to_user: t.created_by,
    reason: 'probe',
    created_by: t.created_by,
    created_at: provAt,
  });
  await db()('container_block').insert({
    container_id: ms.container_id,
    test_id: lot.testId,
    event: 'blocked',
    invalid_count: 3,
    created_by: t.created_by,
    created_at: provAt,
  });
  // a declined role change: rows in role_request and role_decision
  const a = await agentFor(['admin']);
  const b = await agentFor(['admin']);
  const op = await makeUser(['operator']);
  const req = await a.agent.patch(`/api/users/${op.id}`).send({ roles: ['operator', 'verifier'], reason: 'probe' });
  await b.agent
    .post(`/api/users/role-changes/${req.body.pendingRoleChange.requestId}/decline`)
    .send({ reason: 'probe' });
  // a machine account and a webhook endpoint (ERP link, issue 14)
  await a.agent
    .post('/api/machine-accounts')
    .send({ name: 'Protection probe', scopes: ['lots:read'], reason: 'probe' });
  const hook = await a.agent
    .post('/api/webhooks')
    .send({ name: 'Protection probe', url: 'https://erp.example.com/hooks', events: ['lot.released'] });
  await a.agent.post(`/api/webhooks/${hook.body.id}/deactivate`);
  // an integrity alert (about a made-up finding) and its QA sign-off: rows in the integrity tables
  const qa = await agentFor(['qa_manager']);
  const file = (await db()('stored_file').orderBy('id').first('id', 'sha256'))!;
  const { id: alertId } = await raiseAlert(
    db(),
    {
      kind: 'file-hash',
      subjectType: 'stored_file',
      subjectId: String(file.id),
      expected: file.sha256,
      found: 'protection-test-probe',
      summary: 'A made-up finding for the protection test.',
      records: [{ type: 'stored_file', id: String(file.id), label: `File ${file.id}`, href: null }],
    },
    { foundIn: 'sweep' },
  );
  const off = await qa.agent.post(`/api/integrity/alerts/${alertId}/sign-off`).send({
    comment: 'made up for the protection test',
    signature: { username: qa.user.username, password: qa.user.password },
  });
  expect(off.status).toBe(200);
  await methodControlRows(file);
  // trending and the audit-trail review (migration 150): one row of each, written as the app would
  const m = (await db()('measurement').orderBy('id', 'desc').first('id', 'method_id'))!;
  const method = (await db()('identity_method').where({ id: m.method_id }).first('material_id'))!;
  const now = new Date();
  await db()('trend_baseline').insert({
    material_id: method.material_id,
    method_id: m.method_id,
    period_from: now,
    period_to: now,
    reason: 'protection probe',
    fixed_by: qa.user.id,
    fixed_at: now,
  });
  await db()('trend_signal').insert({
    material_id: method.material_id,
    method_id: m.method_id,
    metric: 'correlation',
    scope_kind: 'all',
    scope_value: '',
    scope_label: 'All',
    rule: 'beyond-3-sigma',
    measurement_id: m.id,
    point_ids: JSON.stringify([m.id]),
    value: 0.99,
    limits: '{}',
    detail: 'protection probe',
    status: 'open',
    raised_at: now,
  });
  await db()('audit_review').insert({
    number: `ATR-PROBE-${Date.now()}`,
    period_from: '2026-01-01',
    period_to: '2026-01-31',
    scope: '[]',
    exceptions: '{}',
    findings: 'protection probe',
    actions: 'none',
    reviewed_by: qa.user.id,
    reviewed_at: now,
  });
  // the review reminder (migration 156): one row, written as the reminder job writes it
  await db()('audit_review_reminder').insert({
    due_key: `probe-${Date.now() % 1e9}`,
    after_review_id: null,
    interval_months: 1,
    recipients: 1,
    mailed_at: now,
  });
});

/**
 * Rows in the method-control tables (db/migrations/110_method_control.ts), written by the runtime
 * account the way the service writes them, each signature over the content its recipe rebuilds (so
 * the integrity sweep of later files finds them intact): an override of the gate requested by one QA
 * manager and confirmed by another, the approval record it belongs to, an IR decision, an attempt pin.
 */
async function methodControlRows(file: Pick<StoredFileRow, 'id' | 'sha256'>) {
  const [u1, u2] = [await makeUser(['qa_manager']), await makeUser(['qa_manager'])];
  const mId = material.methodId;
  const sign = async (user: { id: number; fullName: string }, meaning: string, type: string, id: number, c: unknown) =>
    (
      await db()('e_signature').insert({
        user_id: user.id,
        printed_name: user.fullName,
        meaning,
        entity_type: type,
        entity_id: String(id),
        content_hash: contentHash(c),
        statement: null,
        signed_at: new Date(),
      })
    )[0];
  const ov = {
    entityType: 'identity_method' as const,
    entityId: mId,
    justification: 'probe of the protection test',
    changeControl: 'CC-PROBE',
    gateSha256: '1'.repeat(64),
  };
  const reqSig = await sign(u1, 'gate-override-requested', 'identity_method', mId, overrideSignedContent(ov));
  const [ovId] = await db()('gate_override').insert({
    entity_type: ov.entityType,
    entity_id: mId,
    justification: ov.justification,
    change_control: ov.changeControl,
    gate_sha256: ov.gateSha256,
    gate: '{}',
    requested_by: u1.id,
    signature_id: reqSig,
    requested_at: new Date(),
  });
  // the fixture's approved method; the status column is a plain string in the table type
  const row = (await db()('identity_method').where({ id: mId }).first())!;
  const approval = { validationSha256: file.sha256, firstReferenceIds: [], gateOverrideId: ovId };
  const confSig = await sign(
    u2,
    'approved',
    'identity_method',
    mId,
    methodSignedContent({ ...row, status: 'approved' }, approval),
  );
  await db()('gate_override_confirmation').insert({
    override_id: ovId,
    confirmed_by: u2.id,
    signature_id: confSig,
    confirmed_at: new Date(),
  });
  await db()('method_approval').insert({
    method_id: mId,
    validation_file_id: file.id,
    validation_sha256: file.sha256,
    validation: '{"gate":{}}',
    first_reference_ids: '[]',
    gate_override_id: ovId,
    signature_id: confSig,
    created_at: new Date(),
  });
  const irSig = await sign(
    u1,
    'ir-suitability-decided',
    'material',
    material.materialId,
    irSuitabilitySignedContent(material.materialId, true, null, 'probe'),
  );
  await db()('material_ir_suitability').insert({
    material_id: material.materialId,
    suitable: 1,
    replacement_test: null,
    reason: 'probe',
    decided_by: u1.id,
    signature_id: irSig,
    decided_at: new Date(),
  });
  await db()('attempt_pin').insert({
    test_id: lot.testId,
    method_id: mId,
    reference_ids: '[]',
    created_at: new Date(),
  });
}

afterAll(async () => {
  await retire();
  await owner.destroy();
});

async function tables(k: Knex): Promise<string[]> {
  const [rows] = (await k.raw(
    "SELECT table_name AS t FROM information_schema.tables WHERE table_schema = DATABASE() AND table_type = 'BASE TABLE'",
  )) as [{ t: string }[]];
  return rows.map((r) => r.t).filter((t) => !t.startsWith('knex_migrations'));
}

async function triggers(k: Knex): Promise<Map<string, { table: string; timing: string; event: string; body: string }>> {
  const [rows] = (await k.raw(
    'SELECT trigger_name AS n, event_object_table AS t, action_timing AS timing, event_manipulation AS ev, action_statement AS body ' +
      'FROM information_schema.triggers WHERE trigger_schema = DATABASE()',
  )) as [{ n: string; t: string; timing: string; ev: string; body: string }[]];
  return new Map(rows.map((r) => [r.n, { table: r.t, timing: r.timing, event: r.ev, body: r.body }]));
}

describe('every table is classified, with the grants and triggers of its class', () => {
  it('each table of the schema is append-only, guarded or operational, exactly once', async () => {
    const classes = [...appendOnlyTables, ...guardedTables, ...Object.keys(operationalTables)];
    expect(new Set(classes).size, 'a table is listed in two classes').toBe(classes.length);
    const unclassified = (await tables(owner)).filter((t) => !classes.includes(t));
    expect(unclassified, 'classify these tables in db/migrations/index.ts').toEqual([]);
  });

  it("the runtime account's rights on each table are exactly those of its class", async () => {
    // information_schema.table_privileges lists the connected account's own table grants.
    const [rows] = (await db().raw(
      'SELECT table_name AS t, privilege_type AS p FROM information_schema.table_privileges WHERE table_schema = DATABASE()',
    )) as [{ t: string; p: string }[]];
    const held = new Map<string, string[]>();
    for (const r of rows) held.set(r.t, [...(held.get(r.t) ?? []), r.p]);
    for (const t of await tables(owner))
      expect((held.get(t) ?? []).sort(), `grants on ${t}`).toEqual([...runtimePrivileges(t)].sort());
  });

  it('append-only tables carry the no-update and no-delete triggers', async () => {
    const trg = await triggers(owner);
    for (const t of appendOnlyTables) {
      expect(trg.get(`${t}_no_update`), `${t}_no_update`).toMatchObject({
        table: t,
        timing: 'BEFORE',
        event: 'UPDATE',
      });
      expect(trg.get(`${t}_no_delete`), `${t}_no_delete`).toMatchObject({
        table: t,
        timing: 'BEFORE',
        event: 'DELETE',
      });
    }
  });

  it('guarded tables carry a guard that classifies every column, and a no-delete trigger', async () => {
    const trg = await triggers(owner);
    for (const t of guardedTables) {
      const guard = trg.get(guardTriggerName(t));
      expect(guard, `${guardTriggerName(t)}`).toMatchObject({ table: t, timing: 'BEFORE', event: 'UPDATE' });
      expect(trg.get(`${t}_no_delete`), `${t}_no_delete`).toMatchObject({
        table: t,
        timing: 'BEFORE',
        event: 'DELETE',
      });
      const marker = /drumline-guard [a-z_]+: ([^*]*)\*\//.exec(guard!.body)?.[1] ?? '';
      expect(marker, `${t}: re-apply the guard with every column classified`).not.toMatch(/UNCLASSIFIED/);
      const named = new Set(marker.split(/[;,:\s]+/));
      const [cols] = (await owner.raw(
        'SELECT column_name AS c FROM information_schema.columns WHERE table_schema = DATABASE() AND table_name = ?',
        [t],
      )) as [{ c: string }[]];
      for (const { c } of cols) expect(named.has(c), `${t}.${c} is not classified in its guard`).toBe(true);
    }
  });
});

describe('the probe of issue 12: approved content can no longer be changed behind the application', () => {
  it("an approved method's minimum correlation cannot be set to 0", async () => {
    const m = (await db()('identity_method').where({ id: material.methodId }).first())!;
    const params = JSON.parse(m.params);
    params.thresholds.minCorrelation = 0;
    await expect(
      db()('identity_method')
        .where({ id: material.methodId })
        .update({ params: JSON.stringify(params) }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/params cannot change once approved/) });
    await expect(
      owner('identity_method')
        .where({ id: material.methodId })
        .update({ params: JSON.stringify(params) }),
    ).rejects.toMatchObject(REFUSED);
    expect(JSON.parse((await db()('identity_method').where({ id: material.methodId }).first())!.params)).toEqual(
      JSON.parse(m.params),
    );
  });

  it("an approved reference's bands cannot be emptied", async () => {
    const id = material.referenceIds[0];
    await expect(db()('reference_spectrum').where({ id }).update({ bands: '[]' })).rejects.toMatchObject({
      ...REFUSED,
      sqlMessage: expect.stringMatching(/bands cannot change once approved/),
    });
    expect(JSON.parse((await db()('reference_spectrum').where({ id }).first())!.bands).length).toBeGreaterThan(3);
  });

  it('a failed instrument check cannot be turned into a pass', async () => {
    const id = failedCheck.checkId!;
    await expect(
      db()('instrument_check')
        .where({ id })
        .update({ verdict: 'pass', valid_until: new Date(Date.now() + 86_400_000) }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/verdict never changes/) });
    expect((await db()('instrument_check').where({ id }).first())!.verdict).toBe('fail');
  });
});

describe('append-only tables refuse UPDATE and DELETE (runtime: no privilege; owner: trigger)', () => {
  const probes: Record<string, { column: string; value: unknown }> = {
    audit_event: { column: 'reason', value: 'rewritten' },
    e_signature: { column: 'content_hash', value: '0'.repeat(64) },
    stored_file: { column: 'data', value: Buffer.from('rewritten') },
    certificate: { column: 'sha256', value: '0'.repeat(64) },
    measurement: { column: 'verdict', value: 'pass' },
    container: { column: 'label', value: 'RELABELLED' },
    role_request: { column: 'roles_after', value: '["admin"]' },
    role_decision: { column: 'decision', value: 'confirmed' },
    role_grant: { column: 'roles', value: '["admin"]' },
    integrity_alert: { column: 'found', value: '0'.repeat(64) },
    integrity_alert_record: { column: 'label', value: 'elsewhere' },
    integrity_signoff: { column: 'comment', value: 'rewritten' },
    supplier: { column: 'name', value: 'Renamed Ltd' },
    material_source: { column: 'manufacturer_key', value: 99 },
    source_status: { column: 'status', value: 'qualified' },
    material_profile: { column: 'retest_months', value: 120 },
    line_clearance: { column: 'area', value: 'elsewhere' },
    sampling_record: { column: 'tool', value: 'none' },
    sampled_container: { column: 'note', value: 'never opened' },
    container_status: { column: 'status', value: 'released' },
    lot_check: { column: 'outcome', value: 'conforms' },
    lot_disposition: { column: 'decision', value: 'released' },
    lot_retest: { column: 'reason', value: 'rewritten reason of the retest' },
    gate_override: { column: 'justification', value: 'rewritten' },
    gate_override_confirmation: { column: 'confirmed_at', value: new Date(0) },
    method_approval: { column: 'validation_sha256', value: '0'.repeat(64) },
    material_ir_suitability: { column: 'suitable', value: 0 },
    attempt_pin: { column: 'reference_ids', value: '[1]' },
    spectrum_fingerprint: { column: 'decoded_sha256', value: '0'.repeat(64) },
    measurement_provenance: { column: 'remeasure_reason', value: 'rewritten' },
    test_handover: { column: 'to_user', value: 1 },
    container_block: { column: 'event', value: 'released' },
    password_history: { column: 'password_hash', value: 'rewritten' },
    trend_baseline: { column: 'period_to', value: new Date(0) },
    audit_review: { column: 'findings', value: 'rewritten' },
    audit_review_reminder: { column: 'recipients', value: 0 },
    certificate_number: { column: 'lot_id', value: 1 },
    certificate_issue_failure: { column: 'problem', value: 'rewritten' },
    audit_chain_key: { column: 'first_event_id', value: 999_999 },
    audit_checkpoint: { column: 'head_hash', value: '0'.repeat(64) },
    instrument_qualification: { column: 'status', value: 'passed' },
    instrument_maintenance: { column: 'description', value: 'rewritten' },
    instrument_service_event: { column: 'reason', value: 'rewritten' },
    check_impact_measurement: { column: 'measurement_id', value: 1 },
    check_impact_notice: { column: 'notice', value: 'rewritten' },
    instrument_intake_setting: { column: 'manual_upload_allowed', value: 1 },
    folder_acquisition: { column: 'sha256', value: 'f'.repeat(64) },
    folder_acquisition_event: { column: 'event', value: 'not-a-sample' },
  };
  beforeAll(async () => {
    // lifecycle and look-back rows, written as the application would, around the passed lot's measurement
    const m = (await db()('measurement').where({ test_id: lot.testId }).first())!;
    const anySig = (await db()('e_signature').orderBy('id').first('id'))!;
    const at = new Date();
    await db()('instrument_qualification').insert({
      instrument_id: m.instrument_id,
      stage: 'oq',
      document_ref: 'OQ-PROBE-1',
      executed_from: '2026-01-05',
      executed_to: '2026-01-06',
      status: 'passed',
      summary: 'probe record',
      signature_id: anySig.id,
      recorded_by: lot.operator.id,
      recorded_at: at,
    });
    await db()('instrument_maintenance').insert({
      instrument_id: m.instrument_id,
      kind: 'repair',
      performed_on: '2026-01-07',
      performed_by_text: 'probe engineer',
      description: 'probe entry',
      recorded_by: lot.operator.id,
      recorded_at: at,
    });
    await db()('instrument_service_event').insert({
      instrument_id: m.instrument_id,
      state: 'out-of-service',
      reason: 'probe reason',
      recorded_by: lot.operator.id,
      recorded_at: at,
    });
    const [aid] = await db()('check_impact_assessment').insert({
      instrument_check_id: m.instrument_check_id,
      instrument_id: m.instrument_id,
      check_type: 'polystyrene',
      window_from: null,
      window_to: at,
      basis: 'acquisition-or-upload',
      opened_at: at,
      status: 'open',
    });
    await db()('check_impact_measurement').insert({
      assessment_id: aid,
      measurement_id: m.id,
      test_id: m.test_id,
      lot_id: lot.lotId,
      container_id: m.container_id,
      measured_at: m.created_at,
    });
    await db()('check_impact_notice').insert({
      assessment_id: aid,
      lot_id: lot.lotId,
      certificate_id: certificateId,
      notice: 'probe notice',
      created_at: at,
    });
    // intake rows (docs/instrument-intake.md): a setting, a received file and its event
    await db()('instrument_intake_setting').insert({
      instrument_id: m.instrument_id,
      export_folder: null,
      use_polling: false,
      manual_upload_allowed: false,
      time_zone: 'Europe/Berlin',
      reason: 'probe reason',
      set_by: lot.operator.id,
      created_at: at,
    });
    const [acq] = await db()('folder_acquisition').insert({
      instrument_id: m.instrument_id,
      relative_path: 'probe.jdx',
      file_id: m.file_id,
      sha256: 'a'.repeat(64),
      size: 1,
      received_at: at,
    });
    await db()('folder_acquisition_event').insert({
      acquisition_id: acq,
      event: 'attached',
      measurement_id: m.id,
      created_at: at,
    });
    // a password change through the application writes a password_history row to try
    const { agent, user } = await agentFor(['operator']);
    const r = await agent
      .post('/api/auth/password')
      .send({ currentPassword: user.password, newPassword: 'violet-harbour-lamp-93' });
    expect(r.status).toBe(204);
    // a failed certificate issue writes a certificate_issue_failure row to try (its number row too)
    const failing = await createPassedLot(db(), { containers: 1 });
    await expect(
      issueCertificate(
        db(),
        { lotId: failing.lotId, testId: failing.testId, actor: { id: null, name: 'test' } },
        { config: loadConfig({ signingP12Path: 'no-such-signing-key.p12' }) },
      ),
    ).rejects.toThrow();
    // a checkpoint row to try (the keyed start, audit_chain_key, was written by the first audit event)
    const checkpointDir = fs.mkdtempSync(path.join(os.tmpdir(), 'drumline-cp-'));
    try {
      await writeCheckpoint(db(), loadConfig({ auditCheckpointDir: checkpointDir }), { force: true });
    } finally {
      fs.rmSync(checkpointDir, { recursive: true, force: true });
    }
  });
  it('covers every append-only table', () => {
    expect(Object.keys(probes).sort()).toEqual([...appendOnlyTables].sort());
  });
  it.each(Object.keys(probes))('%s', async (t) => {
    const row = await db()(t).orderBy('id', 'desc').first('id');
    expect(row, `no ${t} row to try`).toBeTruthy();
    const { column, value } = probes[t];
    await expect(
      db()(t)
        .where({ id: row.id })
        .update({ [column]: value }),
    ).rejects.toMatchObject(NO_PRIVILEGE);
    await expect(db()(t).where({ id: row.id }).delete()).rejects.toMatchObject(NO_PRIVILEGE);
    await expect(
      owner(t)
        .where({ id: row.id })
        .update({ [column]: value }),
    ).rejects.toMatchObject(REFUSED);
    await expect(owner(t).where({ id: row.id }).delete()).rejects.toMatchObject(REFUSED);
  });
});

describe('guarded records: never deleted, only the permitted changes', () => {
  it('an approved method cannot go back to draft, and a draft cannot be approved without its own signature', async () => {
    await expect(
      db()('identity_method').where({ id: material.methodId }).update({ status: 'draft' }),
    ).rejects.toMatchObject({
      ...REFUSED,
      sqlMessage: expect.stringMatching(/status may not change from approved to draft/),
    });
    const v1 = (await db()('identity_method').where({ id: material.methodId }).first())!;
    const [draftId] = await db()('identity_method').insert({
      ...v1,
      id: undefined,
      version: 2,
      status: 'draft',
      supersedes_id: v1.id,
      approved_signature_id: null,
      approved_at: null,
    });
    // A draft's content may change (the permitted edit) ...
    await db()('identity_method').where({ id: draftId }).update({ change_note: 'tuned' });
    // ... but it is approved only with a signature ...
    await expect(
      db()('identity_method').where({ id: draftId }).update({ status: 'approved', approved_at: new Date() }),
    ).rejects.toMatchObject({
      ...REFUSED,
      sqlMessage: expect.stringMatching(/status approved needs approved_signature_id/),
    });
    // ... of this very version (not the signature of version 1).
    await expect(
      db()('identity_method')
        .where({ id: draftId })
        .update({ status: 'approved', approved_at: new Date(), approved_signature_id: v1.approved_signature_id }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/must name a approved signature/) });
    // and the signature of an approved version is never exchanged.
    await expect(
      db()('identity_method').where({ id: material.methodId }).update({ approved_signature_id: null }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/set once/) });
  });

  it('an approved reference can only be retired, with its retirement signature', async () => {
    const id = material.referenceIds[0];
    await expect(db()('reference_spectrum').where({ id }).update({ status: 'draft' })).rejects.toMatchObject(REFUSED);
    await expect(
      db()('reference_spectrum').where({ id }).update({ status: 'retired', retire_reason: 'no signature' }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/retired needs retired_signature_id/) });
    await expect(db()('reference_spectrum').where({ id }).update({ approved_method_id: null })).rejects.toMatchObject(
      REFUSED,
    );
  });

  it('an approved check specification cannot change its bands', async () => {
    const spec = (await db()('instrument_check_spec')
      .where({ instrument_id: failedCheck.instrumentId, status: 'approved' })
      .first())!;
    await expect(db()('instrument_check_spec').where({ id: spec.id }).update({ bands: '[]' })).rejects.toMatchObject(
      REFUSED,
    );
  });

  it('a passed lot cannot go back, cannot be released unless passed, and points only to its own certificates', async () => {
    await expect(
      db()('lot').where({ id: lot.lotId }).update({ identity_status: 'awaiting-testing' }),
    ).rejects.toMatchObject({
      ...REFUSED,
      // only a retest of a released lot takes a passed identity back (db/migrations/145_retest.ts)
      sqlMessage: expect.stringMatching(
        /identity goes back from passed to awaiting testing only when a released lot is retested/,
      ),
    });
    await expect(db()('lot').where({ id: lot.lotId }).update({ container_count: 1 })).rejects.toMatchObject(REFUSED);
    const other = await createPassedLot(db(), { containers: 1, stage: 'awaiting-verification' });
    await expect(db()('lot').where({ id: other.lotId }).update({ status: 'released' })).rejects.toMatchObject({
      ...REFUSED,
      sqlMessage: expect.stringMatching(/only a lot whose identity passed/),
    });
    await expect(
      db()('lot').where({ id: other.lotId }).update({ certificate_id: certificateId }),
    ).rejects.toMatchObject({ ...REFUSED, sqlMessage: expect.stringMatching(/certificate of this lot/) });
    // a passed lot is released only through a release record of this lot (issue 14 item 5)
    await expect(db()('lot').where({ id: lot.lotId }).update({ status: 'released' })).rejects.toMatchObject({
      ...REFUSED,
      sqlMessage: expect.stringMatching(/released only through a signed release record/),
    });
    const [sigId] = await db()('e_signature').insert({
      user_id: lot.operator.id,
      printed_name: 'probe',
      meaning: 'released',
      entity_type: 'lot',
      entity_id: String(lot.lotId),
      content_hash: '0'.repeat(64),
      signed_at: new Date(),
    });
    const [dispositionId] = await db()('lot_disposition').insert({
      lot_id: lot.lotId,
      decision: 'released',
      retest_date: '2030-01-01',
      conditions: '[]',
      signature_id: sigId,
      decided_by: lot.operator.id,
      decided_at: new Date(),
    });
    await db()('lot')
      .where({ id: lot.lotId })
      .update({ status: 'released', disposition_id: dispositionId, retest_date: '2030-01-01' });
    expect((await db()('lot').where({ id: lot.lotId }).first())!.status).toBe('released');
  });

  it('a verified test is frozen: no status change, no other verifier, no other measurement scope', async () => {
    await expect(
      db()('identity_test').where({ id: lot.testId }).update({ status: 'in-progress' }),
    ).rejects.toMatchObject(REFUSED);
    await expect(
      db()('identity_test').where({ id: lot.testId }).update({ verified_by: lot.operator.id }),
    ).rejects.toMatchObject(REFUSED);
    await expect(
      db()('identity_test').where({ id: lot.testId }).update({ method_id: material.methodId }),
    ).rejects.toMatchObject(REFUSED);
  });

  it('a closed investigation cannot be reopened or re-decided', async () => {
    const [id] = await db()('investigation').insert({
      number: `INV-PROT-${Date.now()}`,
      lot_id: lot.lotId,
      test_id: lot.testId,
      status: 'closed',
      failing: '[]',
      phase1: '{}',
      decision: 'confirmed',
      justification: 'closed for the protection test',
      opened_at: new Date(),
      closed_at: new Date(),
      updated_at: new Date(),
    });
    await expect(db()('investigation').where({ id }).update({ status: 'open' })).rejects.toMatchObject(REFUSED);
    await expect(db()('investigation').where({ id }).update({ decision: 'invalidated' })).rejects.toMatchObject({
      ...REFUSED,
      sqlMessage: expect.stringMatching(/decision is set once/),
    });
  });

  it('master data keep their identifying columns: a material code, an instrument technique', async () => {
    await expect(db()('material').where({ id: material.materialId }).update({ code: 'RENAMED' })).rejects.toMatchObject(
      REFUSED,
    );
    await expect(
      db()('instrument').where({ id: failedCheck.instrumentId }).update({ technique: 'nir' }),
    ).rejects.toMatchObject(REFUSED);
    // the permitted change (audited by the application with a reason)
    await db()('material').where({ id: material.materialId }).update({ notes: 'edited note' });
  });

  // (last: the rows of every guarded table exist by now)
  it('no guarded row can be deleted (runtime: no privilege; owner: trigger)', async () => {
    for (const t of guardedTables) {
      const row = await db()(t).orderBy('id', 'desc').first('id');
      expect(row, `no ${t} row to try`).toBeTruthy();
      await expect(db()(t).where({ id: row.id }).delete(), t).rejects.toMatchObject(NO_PRIVILEGE);
      await expect(owner(t).where({ id: row.id }).delete(), t).rejects.toMatchObject(REFUSED);
    }
  });
});

describe('the runtime account cannot remove the protection', () => {
  it.each(['stored_file_no_update', 'lot_guard_update', 'identity_method_guard_update'])(
    'DROP TRIGGER %s is refused',
    async (name) => {
      await expect(db().raw(`DROP TRIGGER ${name}`)).rejects.toThrow(/denied/i);
    },
  );
  it('TRUNCATE and ALTER are refused on a guarded table', async () => {
    await expect(db().raw('TRUNCATE TABLE identity_method')).rejects.toThrow(/denied/i);
    await expect(db().raw('ALTER TABLE lot DROP COLUMN notes')).rejects.toThrow(/denied/i);
  });
});
