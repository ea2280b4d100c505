/**
 * Reference library (issue 4): materials, versioned identity methods, reference spectra with
 * upload limits and engine errors, approval with e-signature (21 CFR 11.50 / 11.70), the
 * specificity gate (ICH Q2(R2): an identity test must reject closely related materials),
 * retirement, and the exports the testing module uses.
 *
 * Real spectra: ../shared/reference-data/atr-ftir-fibres (FasTEX-KCL ATR-FTIR fibre set, MIT;
 * see the folder's README). Lyocell and rayon (viscose) are both regenerated cellulose:
 * chemically the same polymer, so a mid-IR whole-spectrum method is not expected to tell them
 * apart - the look-alike pair the specificity gate exists for.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentFor, db } from './helpers';
import {
  approveFirstVersion,
  approveMethod,
  canonical,
  createMaterial,
  fibre,
  perturbedCsv,
  sha256,
  sigOf,
  upload,
  uploadOne,
} from './fixtures-library';
import { readSpectrum, type SpectrumError } from '../../server/spectra';
import { getApprovedReferenceSet, searchApprovedLibrary } from '../../server/modules/library';
import { loadConfig } from '../../server/lib/config';

type Ctx = Awaited<ReturnType<typeof agentFor>>;
let qa1: Ctx; // uploads
let qa2: Ctx; // approves
let qa3: Ctx; // requests gate overrides where materials of other test files block the gate (setup)
let op: Ctx;
let aud: Ctx;

beforeAll(async () => {
  [qa1, qa2, qa3, op, aud] = await Promise.all([
    agentFor(['qa_manager']),
    agentFor(['qa_manager']),
    agentFor(['qa_manager']),
    agentFor(['operator']),
    agentFor(['auditor']),
  ]);
});
afterAll(async () => {
  // nothing to clean: GMP records are never deleted, and each run uses a fresh database
});

async function auditRows(entityType: string, entityId: number | string, action?: string) {
  const q = db()('audit_event').where({ entity_type: entityType, entity_id: String(entityId) });
  if (action) q.andWhere({ action });
  return q.orderBy('id');
}

/**
 * Approve; when foreign materials of other test files block the gate, qa3 requests an override and
 * the approver confirms it (setup only: two QA managers, neither the uploader).
 */
async function approveForSetup(agent: Ctx, refId: number) {
  let res = await agent.agent.post(`/api/references/${refId}/approve`).send({ signature: sigOf(agent.user) });
  if (res.status === 409 && res.body.error.code === 'SPECIFICITY_GATE') {
    const o = await qa3.agent.post(`/api/references/${refId}/gate-override`).send({
      justification: 'Test setup: other test files share this database.',
      changeControl: 'CC-TEST-SETUP',
      signature: sigOf(qa3.user),
    });
    expect(o.status, JSON.stringify(o.body)).toBe(201);
    res = await agent.agent
      .post(`/api/references/${refId}/approve`)
      .send({ signature: sigOf(agent.user), overrideId: o.body.id });
  }
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return res.body;
}

describe('materials', () => {
  it('QA creates a material with a draft identity method version 1; every role reads it', async () => {
    const m = await createMaterial(qa1.agent, 'Lactose monohydrate', {
      monographRef: 'Ph. Eur. 0187',
      notes: 'sieved grade',
    });
    expect(m.draftMethodId).toBeGreaterThan(0);
    for (const who of [op, aud, qa2]) {
      const res = await who.agent.get(`/api/materials/${m.id}`);
      expect(res.status).toBe(200);
      expect(res.body.code).toBe(m.code);
      expect(res.body.methods).toHaveLength(1);
      expect(res.body.methods[0]).toMatchObject({ version: 1, status: 'draft', technique: 'mid-ir-atr' });
      // the CO2 region is excluded by default (domain-facts: atmospheric CO2 around 2400-2280 cm-1, common practice)
      expect(
        res.body.methods[0].params.excludedRegions.some(
          (r: { from: number; to: number }) => r.from <= 2300 && r.to >= 2380,
        ),
      ).toBe(true);
    }
    const list = await aud.agent.get('/api/materials');
    expect(list.body.find((x: { id: number }) => x.id === m.id)).toMatchObject({
      approvedMethod: null,
      references: { draft: 0, approved: 0, retired: 0 },
    });
    expect(await auditRows('material', m.id, 'material.created')).toHaveLength(1);
  });

  it('a change is audited with before, after and the reason; a change without a reason is refused', async () => {
    const m = await createMaterial(qa1.agent, 'Microcrystalline cellulose');
    expect((await qa1.agent.patch(`/api/materials/${m.id}`).send({ name: 'MCC 102' })).status).toBe(400);
    const res = await qa1.agent
      .patch(`/api/materials/${m.id}`)
      .send({ name: 'Microcrystalline cellulose 102', reason: 'grade named on the supplier CoA' });
    expect(res.status).toBe(200);
    const [ev] = await auditRows('material', m.id, 'material.updated');
    expect(JSON.parse(ev.before_json!).name).toBe('Microcrystalline cellulose');
    expect(JSON.parse(ev.after_json!).name).toBe('Microcrystalline cellulose 102');
    expect(ev.reason).toBe('grade named on the supplier CoA');
  });

  it('operator and auditor cannot create or change materials (403, nothing written)', async () => {
    const m = await createMaterial(qa1.agent, 'Talc');
    for (const who of [op, aud]) {
      expect(
        (await who.agent.post('/api/materials').send({ code: 'NOPE1', name: 'Nope', techniques: ['mid-ir-atr'] }))
          .status,
      ).toBe(403);
      expect(
        (await who.agent.patch(`/api/materials/${m.id}`).send({ name: 'Changed', reason: 'should not work' })).status,
      ).toBe(403);
    }
    expect(await db()('material').where({ code: 'NOPE1' }).first()).toBeUndefined();
    expect((await db()('material').where({ id: m.id }).first())!.name).toBe('Talc');
  });
});

describe('identity methods are versioned; an approved version is immutable', () => {
  it('draft edits are audited; approval is signed; PATCH on the approved version gives 409 and a new draft version', async () => {
    const m = await createMaterial(qa1.agent, 'Sodium chloride');
    const v1 = m.draftMethodId;
    const get = async (id: number) => (await qa1.agent.get(`/api/methods/${id}`)).body;
    const p1 = (await get(v1)).params;

    // draft: editable, audited
    const edited = await qa1.agent.patch(`/api/methods/${v1}`).send({
      params: { ...p1, thresholds: { ...p1.thresholds, minCorrelation: 0.97 } },
      reason: 'tighter after validation',
    });
    expect(edited.status).toBe(200);
    expect(edited.body.params.thresholds.minCorrelation).toBe(0.97);
    expect(await auditRows('identity_method', v1, 'method.updated')).toHaveLength(1);

    // the engine's own cross-field rule (polynomial below window size) refuses a broken method
    const bad = await qa1.agent
      .patch(`/api/methods/${v1}`)
      .send({ params: { ...p1, smoothing: { windowSize: 5, polynomial: 5, derivative: 0 } }, reason: 'try' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('INVALID_METHOD');

    // operators cannot approve
    expect((await op.agent.post(`/api/methods/${v1}/approve`).send({ signature: sigOf(op.user) })).status).toBe(403);
    // the first version is approved together with the material's first reference
    await uploadOne(qa1.agent, m.id, 'wool_Lincoln_s12.3.csv', fibre('wool_Lincoln_s12.3.csv'));
    const approved = await approveMethod(qa2.agent, qa2.user, v1, qa3);
    expect(approved.status).toBe('approved');
    // (an override request may be signed before it when other test files' materials share the database)
    const approval = approved.signatures.find((x: { meaning: string }) => x.meaning === 'approved');
    expect(approval).toMatchObject({ meaning: 'approved', printedName: qa2.user.fullName });

    // the approved version cannot change: 409 + a new draft version carrying the change
    const before = (await db()('identity_method').where({ id: v1 }).first())!;
    const attempt = await qa1.agent
      .patch(`/api/methods/${v1}`)
      .send({ params: { ...p1, thresholds: { ...p1.thresholds, minCorrelation: 0.99 } }, reason: 'tighten further' });
    expect(attempt.status).toBe(409);
    expect(attempt.body.error.code).toBe('METHOD_IMMUTABLE');
    const newId = attempt.body.error.details.newDraftId;
    expect(newId).toBeGreaterThan(v1);
    const after = (await db()('identity_method').where({ id: v1 }).first())!;
    expect(after.params).toBe(before.params);
    expect(after.status).toBe('approved');
    const v2 = await get(newId);
    expect(v2).toMatchObject({ version: 2, status: 'draft', supersedesId: v1 });
    expect(v2.params.thresholds.minCorrelation).toBe(0.99);

    // a second attempt names the existing draft and creates nothing
    const again = await qa1.agent.patch(`/api/methods/${v1}`).send({ changeNote: 'x', reason: 'again' });
    expect(again.status).toBe(409);
    expect(again.body.error.details.draftId).toBe(newId);
    expect(await db()('identity_method').where({ material_id: m.id }).count({ n: '*' }).first()).toMatchObject({
      n: 2,
    });

    // approving v2 supersedes v1
    await approveMethod(qa2.agent, qa2.user, newId, qa3);
    expect((await get(v1)).status).toBe('superseded');
    expect((await get(newId)).status).toBe('approved');
    const set = await getApprovedReferenceSet(m.id);
    expect(set?.method.id).toBe(newId);
  });

  it('a new method version whose range an approved reference does not cover cannot be approved (409)', async () => {
    const m = await createMaterial(qa1.agent, 'Range check fibre');
    const { ref } = await approveFirstVersion(
      qa1,
      qa2,
      m,
      { name: 'nylon6_s077.csv', data: fibre('nylon6_s077.csv') },
      qa3,
    );
    const p = (await qa1.agent.get(`/api/methods/${m.draftMethodId}`)).body.params;
    // the fibre files cover 550-4000 cm-1 (README of atr-ftir-fibres); 4500 is beyond them
    const draft = await qa1.agent.post(`/api/methods/${m.draftMethodId}/new-version`).send({ changeNote: 'wider' });
    expect(draft.status).toBe(201);
    expect(
      (
        await qa1.agent
          .patch(`/api/methods/${draft.body.id}`)
          .send({ params: { ...p, range: { from: 700, to: 4500 } }, reason: 'try a wider range' })
      ).status,
    ).toBe(200);
    const res = await qa2.agent.post(`/api/methods/${draft.body.id}/approve`).send({ signature: sigOf(qa2.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toContain(ref.code);
    expect((await db()('identity_method').where({ id: draft.body.id }).first())!.status).toBe('draft');
  });

  it('a draft keeps the relative-intensity tolerance and the residual confidence; out-of-range values store nothing', async () => {
    const m = await createMaterial(qa1.agent, 'Intensity criteria fibre');
    const id = m.draftMethodId;
    const p = (await qa1.agent.get(`/api/methods/${id}`)).body.params;
    // Methods stored before engine 2.0.0 have neither field: both criteria are off.
    expect(p.relativeIntensityTolerance ?? null).toBeNull();
    expect(p.thresholds.residualConfidence ?? null).toBeNull();
    const ok = await qa1.agent.patch(`/api/methods/${id}`).send({
      params: {
        ...p,
        relativeIntensityTolerance: 0.15,
        thresholds: { ...p.thresholds, residualConfidence: 0.99 },
        distanceModel: { components: 3, minReferences: 6 },
      },
      reason: 'compare relative band sizes (Ph. Eur. 2.2.24)',
    });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(ok.body.params.relativeIntensityTolerance).toBe(0.15);
    expect(ok.body.params.thresholds.residualConfidence).toBe(0.99);
    const stored = (await db()('identity_method').where({ id }).first())!;
    for (const [bad, sentence] of [
      [{ ...p, relativeIntensityTolerance: 1.5 }, /relativeIntensityTolerance/],
      [
        { ...p, relativeIntensityTolerance: 0.1, peakProminence: null, maxExtraBandProminence: null },
        /needs peakProminence/,
      ],
      [
        { ...p, thresholds: { ...p.thresholds, residualConfidence: 0.99 }, distanceModel: null },
        /needs a distanceModel/,
      ],
      [{ ...p, thresholds: { ...p.thresholds, residualConfidence: 1 } }, /residualConfidence/],
    ] as const) {
      const res = await qa1.agent.patch(`/api/methods/${id}`).send({ params: bad, reason: 'try' });
      expect(res.status).toBe(400);
      expect(JSON.stringify(res.body.error)).toMatch(sentence);
    }
    expect((await db()('identity_method').where({ id }).first())!.params).toBe(stored.params);
  });

  it('POST new-version creates a draft from an approved version', async () => {
    const m = await createMaterial(qa1.agent, 'Magnesium stearate');
    await approveFirstVersion(
      qa1,
      qa2,
      m,
      { name: 'wool_worsted-white_s0.csv', data: fibre('wool_worsted-white_s0.csv') },
      qa3,
    );
    const res = await qa1.agent
      .post(`/api/methods/${m.draftMethodId}/new-version`)
      .send({ changeNote: 'wider band tolerance' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ version: 2, status: 'draft' });
  });
});

describe('reference upload', () => {
  it('stores several files at once as drafts, byte for byte with SHA-256, with auto-picked bands and assignments, and mails QA', async () => {
    const m = await createMaterial(qa1.agent, 'Polyamide 6 fibre');
    const a = fibre('nylon6_s074.csv');
    const b = fibre('nylon6_s077.csv');
    const lastMailBefore = await db()('mail_outbox').max({ id: 'id' }).first();
    const res = await upload(
      qa1.agent,
      m.id,
      [
        { name: 'nylon6_s074.csv', data: a },
        { name: 'nylon6_s077.csv', data: b },
      ],
      { supplier: 'Fibre Works', supplierLot: 'FW-22', measuredHow: 'diamond ATR' },
    );
    expect(res.status).toBe(201);
    expect(res.body).toHaveLength(2);
    for (const [i, data] of [a, b].entries()) {
      const ref = res.body[i];
      expect(ref).toMatchObject({ status: 'draft', supplier: 'Fibre Works', supplierLot: 'FW-22' });
      expect(ref.code).toMatch(new RegExp(`^REF-${m.code}-000${i + 1}$`));
      const f = (await db()('stored_file').where({ id: ref.fileId }).first())!;
      expect(Buffer.compare(f.data, data)).toBe(0);
      expect(f.sha256).toBe(sha256(data));
      expect(ref.file.sha256).toBe(sha256(data));
      // polyamide: the amide I band near 1635-1640 cm-1 (C=O stretch) is a characteristic band
      // (standard IR correlation tables, from memory)
      const amide = ref.bands.find((x: { position: number }) => x.position > 1620 && x.position < 1660);
      expect(amide, JSON.stringify(ref.bands.map((x: { position: number }) => x.position))).toBeTruthy();
      expect(amide.assignment).toMatch(/C=O|amide/i);
      expect(ref.signatures).toEqual([]);
      expect(await auditRows('reference_spectrum', ref.id, 'reference.uploaded')).toHaveLength(1);
    }
    // one message per QA recipient, the uploader excluded
    const mails = await db()('mail_outbox').where('id', '>', Number(lastMailBefore?.id ?? 0));
    expect(mails.length).toBeGreaterThan(0);
    for (const mail of mails) expect(mail.subject).toMatch(/await approval/);
    const to = mails.map((x) => x.to_address);
    expect(to).toContain(`${qa2.user.username}@test.example`);
    expect(to).not.toContain(`${qa1.user.username}@test.example`); // not to the uploader
  });

  it('a file the engine cannot read gives 422 with the engine sentence, and nothing of the batch is stored', async () => {
    const m = await createMaterial(qa1.agent, 'Polyamide 66 fibre');
    const good = fibre('nylon66_s090.csv');
    const rows = [
      'wavenumber_cm-1,absorbance',
      ...Array.from({ length: 12 }, (_, i) => `${1000 + i},${0.1 + i / 100}`),
    ];
    const bad = Buffer.from(rows.join('\n'));
    let expected = '';
    try {
      readSpectrum(new Uint8Array(bad), 'short.csv');
    } catch (e) {
      expected = (e as SpectrumError).message;
      expect((e as SpectrumError).code).toBe('TOO_FEW_POINTS');
    }
    expect(expected.length).toBeGreaterThan(10);
    const files = async () => Number((await db()('stored_file').count({ n: '*' }).first())!.n);
    const refsOf = async () =>
      Number((await db()('reference_spectrum').where({ material_id: m.id }).count({ n: '*' }).first())!.n);
    const [f0, r0] = [await files(), await refsOf()];
    const res = await upload(qa1.agent, m.id, [
      { name: 'nylon66_s090.csv', data: good },
      { name: 'short.csv', data: bad },
    ]);
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('TOO_FEW_POINTS');
    expect(res.body.error.message).toContain(expected);
    expect(res.body.error.message).toContain('short.csv');
    expect(await files()).toBe(f0);
    expect(await refsOf()).toBe(r0);
  });

  it('a spectrum that does not cover the method range is refused (422), nothing stored', async () => {
    const m = await createMaterial(qa1.agent, 'Narrow range material');
    const rows = [
      'wavenumber_cm-1,absorbance',
      ...Array.from({ length: 600 }, (_, i) => `${1000 + i},${(0.2 + 0.1 * Math.sin(i / 20)).toFixed(5)}`),
    ];
    const res = await upload(qa1.agent, m.id, [{ name: 'narrow.csv', data: Buffer.from(rows.join('\n')) }]);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/narrow\.csv/);
    expect(await db()('reference_spectrum').where({ material_id: m.id }).first()).toBeUndefined();
  });

  it('a file above the upload limit gives 413, nothing stored', async () => {
    const m = await createMaterial(qa1.agent, 'Large file material');
    const limit = loadConfig().uploadMaxBytes;
    const big = Buffer.alloc(limit + 1024, 0x31);
    const f0 = Number((await db()('stored_file').count({ n: '*' }).first())!.n);
    const res = await upload(qa1.agent, m.id, [{ name: 'big.csv', data: big }]);
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('FILE_TOO_LARGE');
    expect(Number((await db()('stored_file').count({ n: '*' }).first())!.n)).toBe(f0);
  });

  it('operator and auditor cannot upload (403)', async () => {
    const m = await createMaterial(qa1.agent, 'Upload roles material');
    for (const who of [op, aud]) {
      const res = await upload(who.agent, m.id, [{ name: 'a.csv', data: fibre('nylon6_s081.csv') }]);
      expect(res.status).toBe(403);
    }
    expect(await db()('reference_spectrum').where({ material_id: m.id }).first()).toBeUndefined();
  });
});

describe('bands, approval, e-signature, retirement', () => {
  let mat: { id: number; code: string; draftMethodId: number };
  let ref: { id: number; code: string; bands: { position: number; assignment: string }[] };
  let firstRef: { id: number };
  const file = fibre('polyester-PET_s141_r1.csv');

  beforeAll(async () => {
    mat = await createMaterial(qa1.agent, 'Polyester fibre');
    firstRef = await uploadOne(qa1.agent, mat.id, 'polyester-PET_s144.csv', fibre('polyester-PET_s144.csv'));
    ref = await uploadOne(qa1.agent, mat.id, 'polyester-PET_s141_r1.csv', file);
  });

  it('bands are editable while draft, audited with before/after and the reason', async () => {
    const bands = ref.bands.map((b) => ({ position: b.position }));
    bands.push({ position: 1410.5 });
    const res = await qa1.agent
      .put(`/api/references/${ref.id}/bands`)
      .send({ bands, reason: 'ring band at 1410 cm-1 is characteristic of PET' });
    expect(res.status).toBe(200);
    const added = res.body.bands.find((b: { position: number }) => b.position === 1410.5);
    expect(added).toMatchObject({ origin: 'edited' });
    expect(added.assignment.length).toBeGreaterThan(3);
    const [ev] = await auditRows('reference_spectrum', ref.id, 'reference.bands-edited');
    expect(JSON.parse(ev.before_json!).bands).toHaveLength(ref.bands.length);
    expect(JSON.parse(ev.after_json!).bands).toHaveLength(ref.bands.length + 1);
    expect(ev.reason).toMatch(/1410/);
    // the auditor changes nothing
    expect(
      (await aud.agent.put(`/api/references/${ref.id}/bands`).send({ bands: [], reason: 'auditor try' })).status,
    ).toBe(403);
  });

  it('GMP views show only the assignments QA set; the table candidates go to QA on a draft only, for information', async () => {
    // issue 18 item 4 (docs/methods.md, "Band assignments")
    const asQa = await qa1.agent.get(`/api/references/${ref.id}`);
    expect(asQa.status).toBe(200);
    const auto = asQa.body.bands.filter((b: { origin: string }) => b.origin === 'auto');
    expect(auto.length).toBeGreaterThan(0);
    for (const b of auto) expect(b.shownAssignment).toBeNull(); // the table's text is no assignment
    expect(asQa.body.bandCandidates.length).toBe(asQa.body.bands.length);
    // PET's ester C=O near 1715 cm-1 (standard IR correlation tables, from memory): a carbonyl candidate first
    const co = asQa.body.bandCandidates.find((c: { position: number }) => c.position > 1700 && c.position < 1730);
    expect(co.candidates[0].group).toMatch(/C=O/);
    // an operator, an auditor: no candidates
    for (const who of [op, aud]) {
      const r = await who.agent.get(`/api/references/${ref.id}`);
      expect(r.status).toBe(200);
      expect(r.body.bandCandidates).toBeUndefined();
    }
    // QA sets an assignment on one band: that band shows it, the others still show none
    const target = asQa.body.bands.find((b: { position: number }) => b.position > 1700 && b.position < 1730);
    const res = await qa1.agent.put(`/api/references/${ref.id}/bands`).send({
      bands: asQa.body.bands.map((b: { position: number }) =>
        b.position === target.position
          ? { position: b.position, assignment: 'C=O stretch of the aromatic ester' }
          : { position: b.position },
      ),
      reason: 'assignment of the ester carbonyl band, per SOP QC-IR-004',
    });
    expect(res.status).toBe(200);
    const after = res.body.bands.find((b: { position: number }) => b.position === target.position);
    expect(after).toMatchObject({
      qaAssignment: 'C=O stretch of the aromatic ester',
      shownAssignment: 'C=O stretch of the aromatic ester',
    });
    const others = res.body.bands.filter((b: { position: number }) => b.position !== target.position);
    expect(others.every((b: { shownAssignment: string | null }) => b.shownAssignment === null)).toBe(true);
    // an operator may not set assignments
    const refused = await op.agent
      .put(`/api/references/${ref.id}/bands`)
      .send({ bands: [{ position: target.position, assignment: 'my guess' }], reason: 'operator try' });
    expect(refused.status).toBe(403);
  });

  it('an approved method is required before approving a reference; the first version comes with its first reference', async () => {
    const res = await qa2.agent.post(`/api/references/${ref.id}/approve`).send({ signature: sigOf(qa2.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/first method version together with its first references/);
    await approveMethod(qa2.agent, qa2.user, mat.draftMethodId, qa3, { referenceIds: [firstRef.id] });
    expect((await db()('reference_spectrum').where({ id: firstRef.id }).first())!.status).toBe('approved');
    expect((await db()('reference_spectrum').where({ id: ref.id }).first())!.status).toBe('draft');
  });

  it('role rules: the operator and the auditor cannot approve; the uploader cannot approve her own reference', async () => {
    expect((await op.agent.post(`/api/references/${ref.id}/approve`).send({ signature: sigOf(op.user) })).status).toBe(
      403,
    );
    expect(
      (await aud.agent.post(`/api/references/${ref.id}/approve`).send({ signature: sigOf(aud.user) })).status,
    ).toBe(403);
    const own = await qa1.agent.post(`/api/references/${ref.id}/approve`).send({ signature: sigOf(qa1.user) });
    expect(own.status).toBe(403);
    expect(own.body.error.message).toMatch(/uploaded this reference/);
    expect((await db()('reference_spectrum').where({ id: ref.id }).first())!.status).toBe('draft');
  });

  it('a wrong password is refused (401) and audited; nothing is signed', async () => {
    const res = await qa2.agent
      .post(`/api/references/${ref.id}/approve`)
      .send({ signature: { username: qa2.user.username, password: 'not-the-password' } });
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('SIGNATURE_REFUSED');
    const refused = await auditRows('reference_spectrum', ref.id, 'signature.refused');
    expect(refused.length).toBe(1);
    expect(refused[0].actor_id).toBe(qa2.user.id);
    expect(
      await db()('e_signature')
        .where({ entity_type: 'reference_spectrum', entity_id: String(ref.id) })
        .first(),
    ).toBeUndefined();
    expect((await db()('reference_spectrum').where({ id: ref.id }).first())!.status).toBe('draft');
  });

  it('approval stores a signature whose content hash is the SHA-256 of {referenceId, fileSha256, bands, methodVersionId}', async () => {
    const body = await approveForSetup(qa2, ref.id);
    expect(body.status).toBe('approved');
    const row = (await db()('reference_spectrum').where({ id: ref.id }).first())!;
    const s = (await db()('e_signature').where({ id: row.approved_signature_id! }).first())!;
    expect(s).toMatchObject({
      user_id: qa2.user.id,
      printed_name: qa2.user.fullName,
      entity_type: 'reference_spectrum',
      entity_id: String(ref.id),
    });
    expect(['approved', 'approved-with-justification']).toContain(s.meaning);
    const content = {
      referenceId: ref.id,
      fileSha256: sha256(file),
      bands: JSON.parse(row.bands),
      methodVersionId: mat.draftMethodId,
    };
    expect(s.content_hash).toBe(sha256(canonical(content)));
    expect(row.approved_method_id).toBe(mat.draftMethodId);
    // the signature is shown with the record (21 CFR 11.50)
    const shown = (await aud.agent.get(`/api/references/${ref.id}`)).body;
    // the meaning signed above (with a justification when the shared database's other materials trip the gate)
    const shownApproval = shown.signatures.find((x: { meaning: string }) => x.meaning === s.meaning);
    expect(shownApproval).toMatchObject({ printedName: qa2.user.fullName, contentHash: s.content_hash });
    expect(new Date(shownApproval.signedAt).getTime()).toBeGreaterThan(Date.now() - 60_000);
    expect(
      await auditRows(
        'reference_spectrum',
        ref.id,
        s.meaning === 'approved' ? 'reference.approved' : 'reference.approved-with-justification',
      ),
    ).toHaveLength(1);
  });

  it('an approved reference is immutable: band edits give 409, a second approval gives 409', async () => {
    const res = await qa1.agent
      .put(`/api/references/${ref.id}/bands`)
      .send({ bands: [{ position: 1000 }], reason: 'late edit' });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('REFERENCE_IMMUTABLE');
    expect(
      (await qa2.agent.post(`/api/references/${ref.id}/approve`).send({ signature: sigOf(qa2.user) })).status,
    ).toBe(409);
  });

  it('the approved set holds the approved reference under the approved method; library search names it first', async () => {
    const set = await getApprovedReferenceSet(mat.id);
    expect(set!.method.id).toBe(mat.draftMethodId);
    expect(set!.references.map((r) => r.id)).toEqual([firstRef.id, ref.id]);
    // a second scan of the same PET sample (r2) finds polyester first
    const sample = readSpectrum(new Uint8Array(fibre('polyester-PET_s141_r2.csv')), 'polyester-PET_s141_r2.csv');
    const hits = await searchApprovedLibrary(sample, set!.method.params, 3);
    expect(hits[0]).toMatchObject({ materialId: mat.id, referenceId: ref.id });
    expect(hits[0].score).toBeGreaterThan(0.95);
  });

  it('retirement needs a reason and a signature; nothing is deleted; the set no longer holds it', async () => {
    expect((await qa2.agent.post(`/api/references/${ref.id}/retire`).send({ signature: sigOf(qa2.user) })).status).toBe(
      400,
    );
    expect(
      (await aud.agent.post(`/api/references/${ref.id}/retire`).send({ reason: 'auditor', signature: sigOf(aud.user) }))
        .status,
    ).toBe(403);
    const res = await qa2.agent
      .post(`/api/references/${ref.id}/retire`)
      .send({ reason: 'supplier changed the spinning process', signature: sigOf(qa2.user) });
    expect(res.status).toBe(200);
    expect(res.body.status).toBe('retired');
    // (an override request may precede the approval when other test files' materials share the database)
    expect(
      res.body.signatures
        .map((s: { meaning: string }) => s.meaning)
        .filter((m: string) => m !== 'gate-override-requested'),
    ).toEqual([expect.stringMatching(/^approved/), 'retired']);
    const row = (await db()('reference_spectrum').where({ id: ref.id }).first())!;
    expect(row.retire_reason).toBe('supplier changed the spinning process');
    expect(await db()('stored_file').where({ id: row.file_id }).first())!.toBeTruthy();
    expect((await getApprovedReferenceSet(mat.id))!.references.map((r) => r.id)).toEqual([firstRef.id]);
    expect(
      (await qa2.agent.post(`/api/references/${ref.id}/retire`).send({ reason: 'again', signature: sigOf(qa2.user) }))
        .status,
    ).toBe(409);
  });
});

describe('specificity gate', () => {
  it('look-alike materials (lyocell and rayon, both regenerated cellulose): approval refused with the offending pairs; a single QA manager cannot override; two can', async () => {
    const lyo = await createMaterial(qa1.agent, 'Lyocell fibre');
    const ray = await createMaterial(qa1.agent, 'Rayon viscose fibre');
    const { ref: lyoRef } = await approveFirstVersion(
      qa1,
      qa2,
      lyo,
      { name: 'lyocell_s055.csv', data: fibre('lyocell_s055.csv') },
      qa3,
    );
    // rayon's first version with its first reference: refused by the method gate (lyocell would pass), set up by override
    await approveFirstVersion(
      qa1,
      qa2,
      ray,
      { name: 'rayon-viscose_s191.csv', data: fibre('rayon-viscose_s191.csv') },
      qa3,
    );

    const rayRef = await uploadOne(qa1.agent, ray.id, 'rayon-viscose_s188.csv', fibre('rayon-viscose_s188.csv'));
    // the preview shows the same table without signing
    const preview = await op.agent.get(`/api/references/${rayRef.id}/specificity`);
    expect(preview.status).toBe(200);
    expect(preview.body.offending.map((p: { referenceId: number }) => p.referenceId)).toContain(lyoRef.id);

    const refused = await qa2.agent.post(`/api/references/${rayRef.id}/approve`).send({ signature: sigOf(qa2.user) });
    expect(refused.status).toBe(409);
    expect(refused.body.error.code).toBe('SPECIFICITY_GATE');
    expect(refused.body.error.message).toMatch(/would pass/);
    const pair = refused.body.error.details.offending.find((p: { referenceId: number }) => p.referenceId === lyoRef.id);
    expect(pair).toMatchObject({ materialId: lyo.id, wouldPass: true, state: 'would-pass' });
    // both regenerated cellulose: correlation of the prepared spectra above the default 0.95 limit
    expect(pair.otherAsSample.correlation).toBeGreaterThan(0.95);
    expect(pair.candidateAsSample.correlation).toBeGreaterThan(0.95);
    expect((await db()('reference_spectrum').where({ id: rayRef.id }).first())!.status).toBe('draft');
    expect(await auditRows('reference_spectrum', rayRef.id, 'reference.approval-blocked')).toHaveLength(1);

    // one QA manager with a justification alone: still refused (the old single-signature path is closed)
    const justification =
      'Lyocell and rayon are both regenerated cellulose; the supplier certificate and the fibre cross-section decide the grade.';
    const alone = await qa2.agent
      .post(`/api/references/${rayRef.id}/approve`)
      .send({ signature: sigOf(qa2.user), justification });
    expect(alone.status).toBe(409);
    expect(alone.body.error.code).toBe('SPECIFICITY_GATE');
    expect(
      await db()('e_signature')
        .where({ entity_type: 'reference_spectrum', entity_id: String(rayRef.id) })
        .first(),
    ).toBeUndefined();

    // qa2 requests the override (justification, change control, signature); qa2 cannot confirm it herself
    const req = await qa2.agent
      .post(`/api/references/${rayRef.id}/gate-override`)
      .send({ justification, changeControl: 'CC-2026-014', signature: sigOf(qa2.user) });
    expect(req.status, JSON.stringify(req.body)).toBe(201);
    const self = await qa2.agent
      .post(`/api/references/${rayRef.id}/approve`)
      .send({ signature: sigOf(qa2.user), overrideId: req.body.id });
    expect(self.status).toBe(403);
    expect(self.body.error.message).toMatch(/second, different QA manager/);
    // qa3 confirms by approving
    const ok = await qa3.agent
      .post(`/api/references/${rayRef.id}/approve`)
      .send({ signature: sigOf(qa3.user), overrideId: req.body.id });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(ok.body.status).toBe('approved');
    expect(ok.body.justification).toBe(justification);
    expect(ok.body.signatures.map((x: { meaning: string }) => x.meaning)).toEqual([
      'gate-override-requested',
      'approved-with-justification',
    ]);
    const [ev] = await auditRows('reference_spectrum', rayRef.id, 'reference.approved-with-justification');
    expect(ev.reason).toBe(justification);
    expect(
      JSON.parse(ev.after_json!).specificity.offending.map((p: { referenceId: number }) => p.referenceId),
    ).toContain(lyoRef.id);

    // the library matrix shows the pair as would-pass, in numbers and words
    const matrix = await aud.agent.get('/api/library/specificity?technique=mid-ir-atr');
    expect(matrix.status).toBe(200);
    const cell = matrix.body.cells.find(
      (c: { rowMaterialId: number; columnMaterialId: number }) =>
        c.rowMaterialId === lyo.id && c.columnMaterialId === ray.id,
    );
    expect(cell).toMatchObject({ state: 'would-pass' });
    expect(cell.correlation).toBeGreaterThan(0.95);
  });

  it('a real spectrum and its slightly perturbed copy registered as another material: refused; a chemically different material passes the gate', async () => {
    const a = await createMaterial(qa1.agent, 'Acrylic fibre A');
    const b = await createMaterial(qa1.agent, 'Acrylic fibre B');
    const c = await createMaterial(qa1.agent, 'Aramid fibre');
    const orig = fibre('acrylic_PAN-MA_s005.csv');
    const { ref: refA } = await approveFirstVersion(qa1, qa2, a, { name: 'acrylic_PAN-MA_s005.csv', data: orig }, qa3);
    await uploadOne(qa1.agent, b.id, 'acrylic_copy.csv', perturbedCsv(orig, 11, 0.00005, 1.05));
    const res = await qa2.agent.post(`/api/methods/${b.draftMethodId}/approve`).send({ signature: sigOf(qa2.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('SPECIFICITY_GATE');
    expect(res.body.error.message).toContain(a.code);
    expect(
      res.body.error.details.offending.filter((p: { otherMaterialId: number }) => p.otherMaterialId === a.id),
    ).toHaveLength(2); // both directions
    expect((await db()('identity_method').where({ id: b.draftMethodId }).first())!.status).toBe('draft');

    // para-aramid shares no chemistry with acrylic: the pair with A is distinct, far below the limit
    await uploadOne(qa1.agent, c.id, 'para-aramid_s049.csv', fibre('para-aramid_s049.csv'));
    const gate = (await qa2.agent.get(`/api/methods/${c.draftMethodId}/gate`)).body;
    const withA = gate.rows.filter((p: { otherMaterialId: number }) => p.otherMaterialId === a.id);
    expect(withA).toHaveLength(2);
    for (const row of withA) {
      expect(row.state).toBe('distinct');
      expect(row.correlation).toBeLessThan(0.9);
    }
    expect(refA.id).toBeGreaterThan(0);
  });

  it('two QA managers approving the same reference at once: exactly one signature is stored', async () => {
    const m = await createMaterial(qa1.agent, 'Silk fibre');
    await approveFirstVersion(
      qa1,
      qa2,
      m,
      { name: 'silk_Bombyx-mori_s16.2.csv', data: fibre('silk_Bombyx-mori_s16.2.csv') },
      qa3,
    );
    const r = await uploadOne(
      qa1.agent,
      m.id,
      'silk_Bombyx-mori-yarn_s16.3_r1.csv',
      fibre('silk_Bombyx-mori-yarn_s16.3_r1.csv'),
    );
    // In case materials of other test files block the gate, a fourth QA manager requests an override
    // that either approver may confirm.
    const qa4 = await agentFor(['qa_manager']);
    const o = await qa4.agent.post(`/api/references/${r.id}/gate-override`).send({
      justification: 'Concurrency test: other test files share this database.',
      changeControl: 'CC-TEST-SETUP',
      signature: sigOf(qa4.user),
    });
    const overrideId = o.status === 201 ? (o.body.id as number) : undefined;
    const body = (u: Ctx) => ({ signature: sigOf(u.user), overrideId });
    const [x, y] = await Promise.all([
      qa2.agent.post(`/api/references/${r.id}/approve`).send(body(qa2)),
      qa3.agent.post(`/api/references/${r.id}/approve`).send(body(qa3)),
    ]);
    expect([x.status, y.status].sort(), JSON.stringify([x.body, y.body])).toEqual([200, 409]);
    const sigs = await db()('e_signature')
      .where({ entity_type: 'reference_spectrum', entity_id: String(r.id) })
      .whereNot({ meaning: 'gate-override-requested' });
    expect(sigs).toHaveLength(1);
  });
});
