/**
 * Method control, four eyes (issue 11 item 2; docs/methods.md), on the real MariaDB:
 * - the author of a method version never approves it (service 403, and a database trigger);
 * - a loosened version is refused by its specificity gate, both directions, each with its sentence
 *   and nothing stored: another material would pass; another material comes within the margin of a
 *   limit (r just below the limit, like 0.949 against 0.95); a pair that could not be compared;
 * - an override needs two different QA managers, neither the author (one alone is refused);
 * - "identity by IR not suitable": method approval, IR testing of a lot and the IR certificate refused;
 * - a test attempt keeps the method version and reference set it started with;
 * - the validation record (PDF) is stored with the approval and its SHA-256 is signed.
 *
 * Real spectra: ../shared/reference-data/atr-ftir-fibres (FasTEX-KCL ATR-FTIR fibre set, MIT; see
 * its README). Polypropylene and polyethylene are both polyolefins (C-H bands only): under a
 * correlation-only method with a low limit one passes as the other, while the default method with
 * band concordance tells them apart (the CH3 bands of polypropylene near 1375 and 2950 cm-1,
 * standard IR correlation tables, from memory).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { binaryBody, db, ownerDb, type agentFor } from './helpers';
import {
  approveFirstVersion,
  approveMethod,
  createMaterial,
  fibre,
  perturbedCsv,
  sha256,
  sigOf,
  uploadOne,
  type Party,
} from './fixtures-library';
import {
  agent,
  approvedMaterial,
  flushMail,
  instrumentWithCheck,
  receiveLot,
  retire,
  upload,
  FIBRES,
} from './fixtures-testing';
import { DEFAULT_SPECIFICITY_MARGINS } from '../../server/spectra';
import { DEFAULT_MARGINS } from '../../server/modules/library/contract';
import { issueCertificate } from '../../server/modules/certificates';
import { contentHash } from '../../server/lib/esign';

type Ctx = Awaited<ReturnType<typeof agentFor>>;
let qa1: Ctx; // author and uploader
let qa2: Ctx; // approver
let qa3: Ctx; // second QA manager (override requests)
let op: Ctx;

const PP = fibre('polypropylene_s123.csv');
const PE = fibre('polyethylene-HMPE_s122.csv');

beforeAll(async () => {
  [qa1, qa2, qa3, op] = await Promise.all([
    agent(['qa_manager']),
    agent(['qa_manager']),
    agent(['qa_manager']),
    agent(['operator']),
  ]);
});
afterAll(async () => {
  // Later files see only their own QA managers, and the mail this file queued is delivered.
  await retire();
  await flushMail();
});

const methodRow = async (id: number) => (await db()('identity_method').where({ id }).first())!;
const approvalSigs = (id: number) =>
  db()('e_signature').where({ entity_type: 'identity_method', entity_id: String(id), meaning: 'approved' });

/** Nothing of an approval was stored: still a draft, no approval signature, no validation record. */
async function expectNothingStored(methodId: number) {
  expect((await methodRow(methodId)).status).toBe('draft');
  expect(await approvalSigs(methodId)).toHaveLength(0);
  expect(await db()('method_approval').where({ method_id: methodId }).first()).toBeUndefined();
}

/** Copy of a two-column CSV spectrum keeping only wavenumbers at or above `from`. */
function truncatedCsv(data: Buffer, from: number): Buffer {
  const lines = data.toString('utf8').trim().split(/\r?\n/);
  const keep = lines.slice(1).filter((l) => Number(l.split(',')[0]) >= from);
  return Buffer.from([lines[0], ...keep].join('\n') + '\n');
}

describe('the author of a method version never approves it', () => {
  it('refuses the author (403, sentence, nothing stored), and the database refuses it behind the service too', async () => {
    const m = await createMaterial(qa1.agent, 'Author check');
    await uploadOne(qa2.agent, m.id, 'nylon6_s081.csv', fibre('nylon6_s081.csv'));
    const res = await qa1.agent.post(`/api/methods/${m.draftMethodId}/approve`).send({ signature: sigOf(qa1.user) });
    expect(res.status).toBe(403);
    expect(res.body.error.message).toMatch(/You wrote version 1 of this method\. Another QA manager must approve it/);
    await expectNothingStored(m.draftMethodId);

    // Behind the service: a signature row of the author and a direct UPDATE by the runtime account.
    const row = await methodRow(m.draftMethodId);
    const [sid] = await db()('e_signature').insert({
      user_id: qa1.user.id,
      printed_name: qa1.user.fullName,
      meaning: 'approved',
      entity_type: 'identity_method',
      entity_id: String(m.draftMethodId),
      content_hash: contentHash({ methodId: row.id }),
      statement: null,
      signed_at: new Date(),
    });
    await expect(
      db()('identity_method')
        .where({ id: m.draftMethodId })
        .update({ status: 'approved', approved_signature_id: sid, approved_at: new Date() }),
    ).rejects.toThrow(/author of a method version never approves it/);
    expect((await methodRow(m.draftMethodId)).status).toBe('draft');
  });

  it('a first version is approved only together with references; the approver may not have uploaded one', async () => {
    const m = await createMaterial(qa1.agent, 'No references yet');
    const none = await qa2.agent.post(`/api/methods/${m.draftMethodId}/approve`).send({ signature: sigOf(qa2.user) });
    expect(none.status).toBe(409);
    expect(none.body.error.code).toBe('FIRST_VERSION_NEEDS_REFERENCES');
    expect(none.body.error.message).toMatch(/cannot be checked against references it does not have/);
    await uploadOne(qa2.agent, m.id, 'nylon66_s093.csv', fibre('nylon66_s093.csv'));
    const own = await qa2.agent.post(`/api/methods/${m.draftMethodId}/approve`).send({ signature: sigOf(qa2.user) });
    expect(own.status).toBe(403);
    expect(own.body.error.message).toMatch(/You uploaded reference .* which would be approved with this version/);
    await expectNothingStored(m.draftMethodId);
  });
});

describe('the specificity gate of a method version', () => {
  let pe: { id: number; code: string; draftMethodId: number };
  let pp: { id: number; code: string; draftMethodId: number };
  let loose: number;
  const q1 = (): Party => qa1;
  const q2 = (): Party => qa2;
  const q3 = (): Party => qa3;

  beforeAll(async () => {
    pp = await createMaterial(qa1.agent, 'Polypropylene fibre');
    pe = await createMaterial(qa1.agent, 'Polyethylene fibre');
    await approveFirstVersion(q1(), q2(), pp, { name: 'polypropylene_s123.csv', data: PP }, q3());
    await approveFirstVersion(q1(), q2(), pe, { name: 'polyethylene-HMPE_s122.csv', data: PE }, q3());
  });

  it('version 1 of both was approved with a validation record whose SHA-256 the approval signature covers', async () => {
    const method = (await qa2.agent.get(`/api/methods/${pe.draftMethodId}`)).body;
    expect(method.status).toBe('approved');
    expect(method.approval.firstReferenceIds).toHaveLength(1);
    const pdf = await qa2.agent
      .get(`/api/methods/${pe.draftMethodId}/validation-record`)
      .buffer(true)
      .parse(binaryBody);
    expect(pdf.status).toBe(200);
    const bytes = pdf.body as Buffer;
    expect(bytes.subarray(0, 5).toString()).toBe('%PDF-');
    expect(sha256(bytes)).toBe(method.approval.validationSha256);
    const s = (await approvalSigs(pe.draftMethodId))[0];
    const row = await methodRow(pe.draftMethodId);
    expect(s.content_hash).toBe(
      contentHash({
        methodId: row.id,
        materialId: row.material_id,
        version: 1,
        technique: row.technique,
        params: JSON.parse(row.params),
        validationRecordSha256: method.approval.validationSha256,
        firstReferenceIds: method.approval.firstReferenceIds,
        gateOverrideId: method.approval.gateOverrideId,
      }),
    );
    // the record's content: the other materials with their scores, the polypropylene among them
    const stored = JSON.parse(
      (await db()('method_approval').where({ method_id: pe.draftMethodId }).first())!.validation,
    );
    expect(stored.closest.map((c: { materialCode: string }) => c.materialCode)).toContain(pp.code);
    expect(stored.caution).toMatch(/does not replace/);
    // the engine's defaults and the contract's copy agree
    expect(DEFAULT_MARGINS).toEqual(DEFAULT_SPECIFICITY_MARGINS);
  });

  it('a loosened version (r >= 0.01, no bands, no derivative) is refused: polypropylene would pass; nothing stored', async () => {
    const p = (await qa1.agent.get(`/api/methods/${pe.draftMethodId}`)).body.params;
    const draft = await qa1.agent.post(`/api/methods/${pe.draftMethodId}/new-version`).send({
      params: {
        ...p,
        thresholds: { ...p.thresholds, minCorrelation: 0.01, minDerivativeCorrelation: null },
        peakProminence: null,
        maxExtraBandProminence: null,
      },
      changeNote: 'loosened',
    });
    expect(draft.status).toBe(201);
    loose = draft.body.id;
    const res = await qa2.agent.post(`/api/methods/${loose}/approve`).send({ signature: sigOf(qa2.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('SPECIFICITY_GATE');
    expect(res.body.error.message).toContain(`${pp.code} (reference`);
    expect(res.body.error.message).toMatch(
      /would pass \(correlation coefficient \(r\) 0\.\d+ against a limit of 0\.01\)/,
    );
    const row = res.body.error.details.offending.find(
      (x: { otherMaterialId: number; direction: string }) =>
        x.otherMaterialId === pp.id && x.direction === 'other-as-sample',
    );
    expect(row).toMatchObject({ state: 'would-pass', correlationLimit: 0.01 });
    await expectNothingStored(loose);
    const [ev] = await db()('audit_event')
      .where({ entity_type: 'identity_method', entity_id: String(loose), action: 'method.approval-blocked' })
      .orderBy('id');
    expect(ev).toBeTruthy();
  });

  it('r just below the limit (within the 0.02 margin, like 0.949 against 0.95) is refused; with a margin of 0 the pair is distinct', async () => {
    const gate = (await qa1.agent.get(`/api/methods/${loose}/gate`)).body;
    const ppRow = gate.rows.find(
      (x: { otherMaterialId: number; direction: string }) =>
        x.otherMaterialId === pp.id && x.direction === 'other-as-sample',
    );
    const r = ppRow.correlation as number;
    expect(r).toBeGreaterThan(0.3); // both polyolefins: the C-H stretch bands dominate both spectra
    const p = (await qa1.agent.get(`/api/methods/${loose}`)).body.params;
    const limit = Math.round((r + 0.001) * 10000) / 10000;
    const patched = await qa1.agent
      .patch(`/api/methods/${loose}`)
      .send({ params: { ...p, thresholds: { ...p.thresholds, minCorrelation: limit } }, reason: 'limit just above' });
    expect(patched.status).toBe(200);
    const res = await qa2.agent.post(`/api/methods/${loose}/approve`).send({ signature: sigOf(qa2.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toContain(`${pp.code} (reference`);
    expect(res.body.error.message).toMatch(/comes within the margin of a limit/);
    const within = res.body.error.details.offending.find(
      (x: { otherMaterialId: number; direction: string }) =>
        x.otherMaterialId === pp.id && x.direction === 'other-as-sample',
    );
    expect(within.state).toBe('within-margin');
    expect(within.correlation).toBeLessThan(limit);
    await expectNothingStored(loose);

    // QA sets the margin per method: with 0 the same pair counts as distinct (it fails the limit)
    await qa1.agent.patch(`/api/methods/${loose}`).send({
      params: {
        ...p,
        thresholds: { ...p.thresholds, minCorrelation: limit },
        specificityMargins: { ...DEFAULT_MARGINS, correlation: 0 },
      },
      reason: 'margin 0 for the check',
    });
    const again = (await qa1.agent.get(`/api/methods/${loose}/gate`)).body;
    const row0 = again.rows.find(
      (x: { otherMaterialId: number; direction: string }) =>
        x.otherMaterialId === pp.id && x.direction === 'other-as-sample',
    );
    expect(row0.state).toBe('distinct');
  });

  it('a pair that could not be compared blocks ("not compared" is never "distinct"), in the gate and in the library matrix', async () => {
    // A material whose method starts at 1100 cm-1 and whose reference covers only 1000-4000 cm-1:
    // under polyethylene's range (700-3800 cm-1) its reference cannot be scored.
    const narrow = await createMaterial(qa1.agent, 'Narrow range fibre');
    const p = (await qa1.agent.get(`/api/methods/${narrow.draftMethodId}`)).body.params;
    await qa1.agent
      .patch(`/api/methods/${narrow.draftMethodId}`)
      .send({ params: { ...p, range: { from: 1100, to: 3800 } }, reason: 'range of the short scans' });
    await approveFirstVersion(
      q1(),
      q2(),
      narrow,
      { name: 'polypropylene_s125_short.csv', data: truncatedCsv(fibre('polypropylene_s125.csv'), 1000) },
      q3(),
    );
    const gate = (await qa1.agent.get(`/api/methods/${loose}/gate`)).body;
    const row = gate.rows.find(
      (x: { otherMaterialId: number; direction: string }) =>
        x.otherMaterialId === narrow.id && x.direction === 'other-as-sample',
    );
    expect(row.state).toBe('not-compared');
    expect(row.note).toMatch(/cover|range/i);
    expect(gate.passed).toBe(false);
    const res = await qa2.agent.post(`/api/methods/${loose}/approve`).send({ signature: sigOf(qa2.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(
      new RegExp(`${narrow.code} \\(reference [^)]+\\) as a sample under this version could not be compared`),
    );
    await expectNothingStored(loose);

    const matrix = (await op.agent.get('/api/library/specificity?technique=mid-ir-atr')).body;
    const cell = matrix.cells.find(
      (c: { rowMaterialId: number; columnMaterialId: number }) =>
        c.rowMaterialId === pe.id && c.columnMaterialId === narrow.id,
    );
    expect(cell.state).toBe('not-comparable');
    expect(matrix.notDiscriminated).toContainEqual({ rowMaterialId: pe.id, columnMaterialId: narrow.id });
  });

  it('an override needs two different QA managers, neither the author: one alone, the requester and the author are refused', async () => {
    const justification = 'Validation study VS-88 shows the loosened limit is acceptable with the supplier audit.';
    // the author may not request
    const byAuthor = await qa1.agent
      .post(`/api/methods/${loose}/gate-override`)
      .send({ justification, changeControl: 'CC-2026-031', signature: sigOf(qa1.user) });
    expect(byAuthor.status).toBe(403);
    expect(byAuthor.body.error.message).toMatch(/You wrote this method version/);
    // a short justification or no change control: 400
    expect(
      (
        await qa2.agent
          .post(`/api/methods/${loose}/gate-override`)
          .send({ justification: 'ok', changeControl: 'CC-1', signature: sigOf(qa2.user) })
      ).status,
    ).toBe(400);
    expect(
      (await qa2.agent.post(`/api/methods/${loose}/gate-override`).send({ justification, signature: sigOf(qa2.user) }))
        .status,
    ).toBe(400);
    expect(
      await db()('gate_override').where({ entity_type: 'identity_method', entity_id: loose }).first(),
    ).toBeUndefined();

    const req = await qa2.agent
      .post(`/api/methods/${loose}/gate-override`)
      .send({ justification, changeControl: 'CC-2026-031', signature: sigOf(qa2.user) });
    expect(req.status, JSON.stringify(req.body)).toBe(201);
    // the requester alone cannot confirm
    const alone = await qa2.agent
      .post(`/api/methods/${loose}/approve`)
      .send({ signature: sigOf(qa2.user), overrideId: req.body.id });
    expect(alone.status).toBe(403);
    expect(alone.body.error.message).toMatch(/second, different QA manager/);
    // the author cannot confirm
    const author = await qa1.agent
      .post(`/api/methods/${loose}/approve`)
      .send({ signature: sigOf(qa1.user), overrideId: req.body.id });
    expect(author.status).toBe(403);
    await expectNothingStored(loose);
    // the database refuses a confirmation by the requester, whatever the service does
    const owner = ownerDb();
    try {
      const [sid] = await owner('e_signature').insert({
        user_id: qa2.user.id,
        printed_name: qa2.user.fullName,
        meaning: 'approved',
        entity_type: 'identity_method',
        entity_id: String(loose),
        content_hash: 'x'.repeat(64),
        statement: null,
        signed_at: new Date(),
      });
      await expect(
        owner('gate_override_confirmation').insert({
          override_id: req.body.id,
          confirmed_by: qa2.user.id,
          signature_id: sid,
          confirmed_at: new Date(),
        }),
      ).rejects.toThrow(/never by its requester/);
    } finally {
      await owner.destroy();
    }

    // a second QA manager confirms by approving
    const ok = await qa3.agent
      .post(`/api/methods/${loose}/approve`)
      .send({ signature: sigOf(qa3.user), overrideId: req.body.id });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(ok.body.status).toBe('approved');
    expect(ok.body.approval.gateOverrideId).toBe(req.body.id);
    expect(ok.body.overrides[0]).toMatchObject({ changeControl: 'CC-2026-031', confirmedByName: qa3.user.fullName });
    const conf = (await db()('gate_override_confirmation').where({ override_id: req.body.id }).first())!;
    expect(conf.confirmed_by).toBe(qa3.user.id);
    // confirmed once only
    expect(
      (
        await qa3.agent
          .post(`/api/methods/${loose}/approve`)
          .send({ signature: sigOf(qa3.user), overrideId: req.body.id })
      ).status,
    ).toBe(409);
  });
});

describe('the same margin applies to reference approval', () => {
  it('a reference whose pair with another material comes within the margin of the limit is refused; nothing stored', async () => {
    // Grade C's references are polypropylene scans; its method judges the correlation coefficient
    // alone, with the limit just above the correlation with another polypropylene grade's reference.
    const other = await createMaterial(qa1.agent, 'Polypropylene for margin');
    await approveFirstVersion(qa1, qa2, other, { name: 'polypropylene_s123.csv', data: PP }, qa3);
    const c = await createMaterial(qa1.agent, 'Polypropylene grade C');
    const file = fibre('polypropylene_s127.csv');
    await uploadOne(qa1.agent, c.id, 'polypropylene_s127.csv', file);
    const p = (await qa1.agent.get(`/api/methods/${c.draftMethodId}`)).body.params;
    const corrOnly = (min: number) => ({
      ...p,
      thresholds: { ...p.thresholds, minCorrelation: min, minDerivativeCorrelation: null },
      peakProminence: null,
      maxExtraBandProminence: null,
    });
    await qa1.agent.patch(`/api/methods/${c.draftMethodId}`).send({ params: corrOnly(0.01), reason: 'probe' });
    const gate = (await qa1.agent.get(`/api/methods/${c.draftMethodId}/gate`)).body;
    const r = gate.rows.find(
      (x: { otherMaterialId: number; direction: string }) =>
        x.otherMaterialId === other.id && x.direction === 'other-as-sample',
    ).correlation as number;
    const limit = Math.min(1, Math.round((r + 0.001) * 10000) / 10000);
    await qa1.agent.patch(`/api/methods/${c.draftMethodId}`).send({ params: corrOnly(limit), reason: 'limit' });
    await approveMethod(qa2.agent, qa2.user, c.draftMethodId, qa3); // setup: the same pair blocks the version too

    // a second scan of grade C (the first with a little noise): r with the other grade stays just below the limit
    const ref2 = await uploadOne(qa1.agent, c.id, 'polypropylene_s127_b.csv', perturbedCsv(file, 5, 0.002, 1.02));
    const res = await qa2.agent.post(`/api/references/${ref2.id}/approve`).send({ signature: sigOf(qa2.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('SPECIFICITY_GATE');
    expect(res.body.error.message).toContain(`${other.code} (within the margin of a limit)`);
    const pair = res.body.error.details.offending.find((x: { materialId: number }) => x.materialId === other.id);
    expect(pair.state).toBe('within-margin');
    expect(pair.wouldPass).toBe(false);
    expect(pair.otherAsSample.correlation).toBeLessThan(limit);
    expect(res.body.error.details.margins.correlation).toBe(0.02);
    expect((await db()('reference_spectrum').where({ id: ref2.id }).first())!.status).toBe('draft');
    expect(
      await db()('e_signature')
        .where({ entity_type: 'reference_spectrum', entity_id: String(ref2.id) })
        .first(),
    ).toBeUndefined();
  });
});

describe('identity by IR not suitable', () => {
  it('refuses method approval, IR testing of a lot and the IR certificate; the decision is signed and audited', async () => {
    const salt = await createMaterial(qa1.agent, 'Sodium chloride (no mid-IR bands)');
    await uploadOne(qa1.agent, salt.id, 'cotton_raw-boll_s6.4.csv', fibre('cotton_raw-boll_s6.4.csv'));
    const missingTest = await qa2.agent
      .post(`/api/materials/${salt.id}/ir-suitability`)
      .send({ suitable: false, reason: 'ionic solid', signature: sigOf(qa2.user) });
    expect(missingTest.status).toBe(400);
    expect(
      (
        await op.agent.post(`/api/materials/${salt.id}/ir-suitability`).send({
          suitable: false,
          replacementTest: 'Ph. Eur. 2.3.1 identification reactions of sodium and chloride',
          reason: 'x',
          signature: sigOf(op.user),
        })
      ).status,
    ).toBe(403);
    const marked = await qa2.agent.post(`/api/materials/${salt.id}/ir-suitability`).send({
      suitable: false,
      replacementTest: 'Ph. Eur. 2.3.1 identification reactions of sodium and chloride',
      reason: 'an ionic solid without mid-IR bands',
      signature: sigOf(qa2.user),
    });
    expect(marked.status, JSON.stringify(marked.body)).toBe(201);
    expect(marked.body).toMatchObject({ suitable: false, decidedByName: qa2.user.fullName });
    const sigRow = await db()('e_signature')
      .where({ entity_type: 'material', entity_id: String(salt.id), meaning: 'ir-suitability-decided' })
      .first();
    expect(sigRow!.user_id).toBe(qa2.user.id);
    const ev = await db()('audit_event')
      .where({ entity_type: 'material', entity_id: String(salt.id), action: 'material.ir-not-suitable' })
      .first();
    expect(ev!.reason).toBe('an ionic solid without mid-IR bands');
    const detail = (await op.agent.get(`/api/materials/${salt.id}`)).body;
    expect(detail.irSuitability.replacementTest).toMatch(/sodium and chloride/);

    const res = await qa3.agent.post(`/api/methods/${salt.draftMethodId}/approve`).send({ signature: sigOf(qa3.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('IR_NOT_SUITABLE');
    expect(res.body.error.message).toMatch(/No IR method can be approved: QA marked .* "identity by IR not suitable"/);
    await expectNothingStored(salt.draftMethodId);

    // A material with an approved method, marked afterwards: no lot of it starts IR testing.
    const mat = await approvedMaterial({ name: 'Marked later', referenceFiles: [FIBRES.nylon66Reference] });
    const inst = await instrumentWithCheck('valid');
    const lot = await receiveLot(op.agent, mat.materialId, 1);
    await qa2.agent.post(`/api/materials/${mat.materialId}/ir-suitability`).send({
      suitable: false,
      replacementTest: 'Chemical identification tests of the monograph',
      reason: 'IR does not discriminate the grades of this material',
      signature: sigOf(qa2.user),
    });
    const start = await op.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId: inst.instrumentId });
    expect(start.status).toBe(409);
    expect(start.body.error.code).toBe('IR_NOT_SUITABLE');
    expect(start.body.error.message).toMatch(new RegExp(`Lot ${lot.lotNumber} cannot be put into IR testing`));
    expect(await db()('identity_test').where({ lot_id: lot.id }).first()).toBeUndefined();
    // the certificate issuing path refuses too
    await expect(
      issueCertificate(db(), { lotId: lot.id, testId: 0, actor: { id: qa2.user.id, name: qa2.user.fullName } }),
    ).rejects.toMatchObject({ code: 'IR_NOT_SUITABLE' });
    // a method version of it cannot be approved in the database either (trigger)
    const v2 = await qa1.agent.post(`/api/materials/${mat.materialId}/methods`).send({ changeNote: 'try' });
    expect(v2.status).toBe(201);
    const [sid] = await db()('e_signature').insert({
      user_id: qa3.user.id,
      printed_name: qa3.user.fullName,
      meaning: 'approved',
      entity_type: 'identity_method',
      entity_id: String(v2.body.id),
      content_hash: 'x'.repeat(64),
      statement: null,
      signed_at: new Date(),
    });
    await expect(
      db()('identity_method')
        .where({ id: v2.body.id })
        .update({ status: 'approved', approved_signature_id: sid, approved_at: new Date() }),
    ).rejects.toThrow(/identity by IR not suitable/);
  });
});

describe('a test attempt keeps the method version and reference set it started with', () => {
  it('a version approved during the attempt applies to new attempts only; the review shows it', async () => {
    const mat = await approvedMaterial({ name: 'Pinned attempt', referenceFiles: [FIBRES.petReference] });
    const inst = await instrumentWithCheck('valid');
    const lot = await receiveLot(op.agent, mat.materialId, 2);
    const testId = (await op.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId: inst.instrumentId })).body
      .id as number;
    const pin = (await db()('attempt_pin').where({ test_id: testId }).first())!;
    expect(pin).toMatchObject({ method_id: mat.methodId });
    expect(JSON.parse(pin.reference_ids)).toEqual(mat.referenceIds);

    // QA approves version 2 (a tighter correlation limit) while the attempt runs
    const p = (await qa1.agent.get(`/api/methods/${mat.methodId}`)).body.params;
    const v2 = await qa1.agent.post(`/api/materials/${mat.materialId}/methods`).send({
      params: { ...p, thresholds: { ...p.thresholds, minCorrelation: 0.99 } },
      changeNote: 'tighter',
    });
    expect(v2.status).toBe(201);
    let ok = await qa2.agent.post(`/api/methods/${v2.body.id}/approve`).send({ signature: sigOf(qa2.user) });
    if (ok.status === 409 && ok.body.error.code === 'SPECIFICITY_GATE') {
      // materials of other test files share this database (setup only)
      const o = await qa3.agent.post(`/api/methods/${v2.body.id}/gate-override`).send({
        justification: 'Test setup: other test files share this database.',
        changeControl: 'CC-TEST-SETUP',
        signature: sigOf(qa3.user),
      });
      ok = await qa2.agent
        .post(`/api/methods/${v2.body.id}/approve`)
        .send({ signature: sigOf(qa2.user), overrideId: o.body.id });
    }
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);

    const m = await upload(op.agent, testId, { label: lot.containers[0].label }, FIBRES.petSample);
    const stored = (await db()('measurement').where({ id: m.id }).first())!;
    expect(stored.method_id).toBe(mat.methodId);
    expect(JSON.parse(stored.reference_ids)).toEqual(mat.referenceIds);
    expect((await db()('identity_test').where({ id: testId }).first())!.method_id).toBe(mat.methodId);

    const review = await op.agent.get(`/api/tests/${testId}/review`);
    expect(review.status).toBe(200);
    expect(review.body.pinned).toMatchObject({ methodId: mat.methodId, methodVersion: 1, newerApprovedVersion: 2 });
  });
});
