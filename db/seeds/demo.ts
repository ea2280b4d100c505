/**
 * The demo site: an invented plant, "Lindenhall Pharma, Werk Sued" (oral solid dosage forms),
 * with invented suppliers, instruments and people (the demo accounts). DEMO ONLY.
 *
 * Everything is done through the HTTP API of the real application, by the person whose job it
 * is (db/seeds/demo-client.ts), so every record carries real e-signatures and audit events and
 * the audit chain is the application's own:
 *  - QA (Quinn Okafor) registers the three instruments and approves the site's ATR polystyrene
 *    positions; a second QA manager (Irene Castell) creates the nine grades (she writes each
 *    method version 1) and uploads the reference spectra; Quinn approves each first method
 *    version together with its first references, after the version's specificity gate, with a
 *    validation record (the approver is never the author or the uploader).
 *  - Sodium chloride: Quinn marks it "identity by IR not suitable" (with the chemical tests that
 *    replace IR) instead of approving an IR method; its lot is received but never IR-tested.
 *  - The citric acid pair: the anhydrous grade is approved first; approving the monohydrate's
 *    first version under the default method is refused by the specificity gate (audited); QA
 *    tightens the anhydrous method (version 2) and the monohydrate draft, and both approvals
 *    then pass the gate.
 *  - Operators check FTIR 1 and FTIR 2 with the polystyrene film; FTIR 3's check fails
 *    (wavenumber scale drifted), so its check is due.
 *  - Lots in every state (fixtures/catalogue.ts DEMO_LOTS), see seedLots.
 * Idempotent: when any demo grade code exists already, nothing is done.
 * Spectra: fixtures/spectra (synthetic, see fixtures/README.md).
 */
import { randomBytes } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { Knex } from 'knex';
import { MATERIALS, materialByKey } from '../../fixtures/band-lists';
import {
  DEMO_INSTRUMENTS,
  DEMO_LOTS,
  DEMO_SUPPLIERS,
  DRAFT_REFERENCE_MATERIAL,
  type DemoSpectrum,
  demoSpectra,
} from '../../fixtures/catalogue';
import { LOOK_ALIKE_PAIR, TIGHTENED_HYDRATE_METHOD, TIGHTENED_HYDRATE_NOTE } from '../../fixtures/demo-methods';
import { SPECTRA_DIR } from '../../fixtures/generate';
import { POLYSTYRENE_CHECK_BANDS, SITE_CHECK_JUSTIFICATION } from '../../fixtures/polystyrene';
import { fnv1a } from '../../fixtures/synth';
import { DemoApi, DemoApiError, type DemoSession } from './demo-client';
import { seedTrendHistory } from './trend-history';
import { must } from '../../server/lib/db';

export const DEMO_SITE = {
  company: 'Lindenhall Pharma',
  site: 'Werk Sued',
  description: 'Invented demo site: a plant making tablets and capsules (oral solid dosage forms).',
} as const;

/** Demo grade codes: their presence marks a seeded demo database. */
export const DEMO_MATERIAL_CODES = MATERIALS.map((m) => m.code);

/** Which supplier delivers which grade (reference lots come from the same supplier). */
const SUPPLIER_OF: Record<string, string> = Object.fromEntries(DEMO_LOTS.map((l) => [l.material, l.supplier]));

type Log = (line: string) => void;

export interface DemoIds {
  materials: Record<string, number>;
  methods: Record<string, number>;
  instruments: Record<string, number>;
  references: Record<string, number>;
  lots?: Record<string, number>;
}

function fileOf(spec: DemoSpectrum): { name: string; data: Buffer; type: string } {
  return {
    name: path.basename(spec.path),
    data: readFileSync(path.join(SPECTRA_DIR, spec.path)),
    type: spec.path.endsWith('.csv') ? 'text/csv' : 'chemical/x-jcamp-dx',
  };
}

/** A plausible, invented supplier lot number for the n-th reference batch of a grade. */
function referenceSupplierLot(code: string, n: number): string {
  return `${code.split('-')[0]}-${23 + Math.floor(n / 2)}-${String(1000 + (fnv1a(`${code}|${n}`) % 9000)).padStart(4, '0')}`;
}

export async function isDemoSeeded(db: Knex): Promise<boolean> {
  return !!(await db('material').whereIn('code', DEMO_MATERIAL_CODES).first());
}

interface People {
  quinn: DemoSession;
  irene: DemoSession;
  olga: DemoSession;
  victor: DemoSession;
  dana: DemoSession;
}

async function seedInstruments(p: People, ids: DemoIds, log: Log): Promise<void> {
  for (const inst of DEMO_INSTRUMENTS) {
    const created = await p.quinn.post('/api/instruments', {
      name: inst.name,
      serialNumber: inst.serialNumber,
      technique: 'mid-ir',
      sampling: 'atr',
      location: inst.location,
      // FTIR 1 and 2 are checked weekly at this site, FTIR 3 (dispensary) daily.
      checkValidityHours: inst.id === 'IR-3' ? 24 : 24 * 7,
      reason: 'installed and qualified (demo site)',
    });
    ids.instruments[inst.id] = created.id;
    await p.quinn.post(`/api/instruments/${created.id}/specs`, {
      spec: {
        kind: 'site',
        bands: POLYSTYRENE_CHECK_BANDS.map((b) => ({ nominal: b.site, tolerance: b.tolerance })),
        justification: SITE_CHECK_JUSTIFICATION,
      },
      signature: p.quinn.sig(),
    });
    // Qualification records (invented documents), signed by QA; requalification due in a year.
    const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10);
    for (const [stage, from] of [
      ['iq', -60],
      ['oq', -58],
      ['pq', -50],
    ] as const)
      await p.quinn.post(`/api/instruments/${created.id}/qualifications`, {
        stage,
        documentRef: `${stage.toUpperCase()}-${inst.id}-01 (demo)`,
        executedFrom: day(from),
        executedTo: day(from + 1),
        status: 'passed',
        nextDue: stage === 'pq' ? day(315) : null,
        summary: `${stage.toUpperCase()} protocol executed; every acceptance criterion met (demo record).`,
        signature: p.quinn.sig(),
      });
  }
  await p.olga.post(`/api/instruments/${ids.instruments['IR-3']}/maintenance`, {
    kind: 'preventive',
    performedOn: new Date(Date.now() - 7 * 86_400_000).toISOString().slice(0, 10),
    performedBy: 'Site instrument engineer (demo)',
    description: 'Desiccant replaced and ATR crystal inspected; no damage found.',
  });
  // FTIR 1 exports into a watched folder (under the ignored .data/ folder; docs/instrument-intake.md);
  // `npm run instrument:simulate -- --instrument "FTIR 1" --label <container label>` writes into it.
  await p.quinn.put(`/api/instruments/${ids.instruments['IR-1']}/intake`, {
    exportFolder: 'ftir-1',
    usePolling: false,
    manualUploadAllowed: true,
    timeZone: 'Europe/Berlin',
    reason: 'FTIR 1 exports every scan into its folder; hand uploads stay allowed while the lab changes over (demo).',
  });
  const films = demoSpectra().filter((s) => s.kind === 'polystyrene' && !s.spare);
  for (const film of films) {
    // FTIR 3: only the drifted film is recorded, so its check fails and stays due.
    if (film.instrument === 'IR-3' && film.scaleShift === 0) continue;
    const who = film.instrument === 'IR-3' ? p.dana : p.olga;
    const f = fileOf(film);
    await who.upload(`/api/instruments/${ids.instruments[film.instrument]}/checks`, 'file', [f], who.sig());
  }
  log(
    'three instruments with qualification records and site check positions; FTIR 1 and 2 checked, FTIR 3 check failed (due, look-back open); FTIR 1 exports into its watched folder',
  );
}

async function approveMethod(p: People, methodId: number): Promise<void> {
  await p.quinn.post(`/api/methods/${methodId}/approve`, { signature: p.quinn.sig() });
}

async function uploadReferences(
  p: People,
  ids: DemoIds,
  materialKey: string,
  kinds: DemoSpectrum['kind'][],
): Promise<number[]> {
  const m = materialByKey(materialKey);
  const specs = demoSpectra().filter((s) => s.material === materialKey && kinds.includes(s.kind));
  const out: number[] = [];
  for (const spec of specs) {
    const n = Number(/ref-(\d+)/.exec(spec.path)![1]);
    const [ref] = await p.irene.upload(
      `/api/materials/${ids.materials[materialKey]}/references`,
      'files',
      [fileOf(spec)],
      {
        supplier: SUPPLIER_OF[materialKey] ?? '',
        supplierLot: referenceSupplierLot(m.code, n),
        measuredHow: 'Diamond ATR, 32 scans at 4 cm-1 resolution, powder pressed with the torque-limited clamp (demo)',
        instrumentId: ids.instruments['IR-1'],
      },
    );
    ids.references[spec.path] = ref.id;
    out.push(ref.id);
  }
  return out;
}

/** The test that replaces identity by IR for sodium chloride (Ph. Eur. 2.3.1, identification reactions of ions; from memory). */
export const SODIUM_CHLORIDE_REPLACEMENT_TEST =
  'Pharmacopoeial identification reactions of sodium and of chlorides (Ph. Eur. 2.3.1), performed in the wet-chemistry laboratory.';

async function seedLibrary(p: People, ids: DemoIds, log: Log): Promise<void> {
  for (const m of MATERIALS) {
    // Irene writes each grade's method version 1 and uploads its references; Quinn approves the
    // first version together with its first references (never the author or the uploader).
    const created = await p.irene.post('/api/materials', {
      code: m.code,
      name: m.name,
      grade: m.grade,
      monographRef: m.monograph,
      techniques: ['mid-ir-atr'],
      notes: m.methodNotes,
      reason: 'new grade for the demo site',
    });
    ids.materials[m.key] = created.id;
    ids.methods[m.key] = created.draftMethodId;
    if (m.key === 'sodium-chloride') {
      // Mid-IR cannot identify sodium chloride: QA marks it instead of approving an IR method.
      await p.quinn.post(`/api/materials/${created.id}/ir-suitability`, {
        suitable: false,
        replacementTest: SODIUM_CHLORIDE_REPLACEMENT_TEST,
        reason: 'An ionic solid without mid-IR bands: a mid-IR spectrum cannot confirm its identity.',
        signature: p.quinn.sig(),
      });
      continue;
    }
    await uploadReferences(p, ids, m.key, ['reference']);
    if (m.key !== LOOK_ALIKE_PAIR[1]) {
      await approveMethod(p, created.draftMethodId);
      continue;
    }
    // The look-alike: the specificity gate refuses the monohydrate's first version with its references ...
    try {
      await approveMethod(p, created.draftMethodId);
      throw new Error(
        'demo seed: the specificity gate was expected to refuse citric acid monohydrate under the default method',
      );
    } catch (e) {
      if (!(e instanceof DemoApiError) || e.code !== 'SPECIFICITY_GATE') throw e;
    }
    // ... so QA tightens the anhydrous grade's method (version 2) and the monohydrate's draft, and approves again.
    const anhydrous = LOOK_ALIKE_PAIR[0];
    const v2 = await p.irene.post(`/api/materials/${ids.materials[anhydrous]}/methods`, {
      params: TIGHTENED_HYDRATE_METHOD,
      changeNote: TIGHTENED_HYDRATE_NOTE,
    });
    await approveMethod(p, v2.id);
    ids.methods[anhydrous] = v2.id;
    await p.irene.patch(`/api/methods/${created.draftMethodId}`, {
      params: TIGHTENED_HYDRATE_METHOD,
      changeNote: TIGHTENED_HYDRATE_NOTE,
      reason: 'tightened after the specificity gate refused the default method',
    });
    await approveMethod(p, created.draftMethodId);
  }
  // One more maize starch reference waits for QA approval (the newcomer approves it).
  await uploadReferences(p, ids, DRAFT_REFERENCE_MATERIAL, ['draft-reference']);
  log(
    `${MATERIALS.length - 1} grades with approved methods (each with its validation record) and three approved references each; citric acid methods tightened after the specificity gate; sodium chloride marked "identity by IR not suitable"; one draft reference`,
  );
}

function daysAgo(n: number): string {
  return new Date(Date.now() - n * 86_400_000).toISOString().slice(0, 10);
}

interface LotDetail {
  id: number;
  lotNumber: string;
  containers: { id: number; seq: number; label: string }[];
  source: { sampleCount: number | null };
}

/** Files of a lot's containers, by container number (the poor-contact file kept apart). */
function containerFiles(lotKey: string): Map<number, DemoSpectrum> {
  const out = new Map<number, DemoSpectrum>();
  for (const s of demoSpectra()) if (s.kind === 'container' && s.lot === lotKey) out.set(s.container!, s);
  return out;
}

async function measure(
  who: DemoSession,
  testId: number,
  lot: LotDetail,
  seq: number,
  spec: DemoSpectrum,
): Promise<{ id: number; verdict: string }> {
  const c = lot.containers.find((x) => x.seq === seq)!;
  return who.upload(`/api/tests/${testId}/measurements`, 'file', [fileOf(spec)], { containerId: c.id });
}

const PHASE1_NO_LAB_ERROR = {
  instrument: {
    ok: true,
    note: 'Instrument check of the day valid (site ATR positions); crystal cleaned and background re-measured before the container.',
  },
  sampleHandling: {
    ok: true,
    note: 'Sample taken from the labelled container by the sampling procedure; sampling tools cleaned; no mix-up at the bench.',
  },
  method: { ok: true, note: 'The approved method version and the approved reference set were used.' },
  data: {
    ok: true,
    note: 'The stored raw file is the one measured on this container (file name, time, SHA-256 checked).',
  },
};

/** Olga clears sampling booth 1 for the lot and samples the containers its plan asks for (all, or 1 + √N). */
async function sample(olga: DemoSession, lot: LotDetail, receivedDaysAgo: number): Promise<void> {
  const clear = await olga.post<{ clearances: { id: number }[] }>(`/api/lots/${lot.id}/line-clearance`, {
    area: 'Sampling booth 1 (warehouse, down-flow)',
    previousUse: 'Empty; cleaned after the previous lot',
    signature: olga.sig(),
  });
  const n = lot.source.sampleCount ?? lot.containers.length;
  void receivedDaysAgo; // sampled now: the booth was cleared just before
  await olga.post(`/api/lots/${lot.id}/sampling`, {
    lineClearanceId: clear.clearances.at(-1)!.id,
    sampledAt: new Date().toISOString(),
    tool: 'Stainless steel sampling spear SP-02, cleaned and dried',
    containers: lot.containers
      .slice(0, n)
      .map((c) => ({ containerId: c.id, opened: true, sampled: true, resealed: true })),
    reserve: { quantity: 50, unit: 'g', location: 'Reserve sample store, cabinet R2' },
    signature: olga.sig(),
  });
}

/** Demo-only suppliers beyond those of the demo lots: one blocked, one conditional, one new. */
export const DEMO_EXTRA_SOURCES = [
  {
    supplier: 'Brackwater Trading (broker)',
    material: 'lactose-monohydrate',
    status: 'blocked' as const,
    reason: 'Broker could not name the manufacturing site of its last delivery; blocked pending audit.',
  },
  {
    supplier: 'Oskarsfeld Chemie',
    material: 'paracetamol',
    status: 'conditional' as const,
    conditions:
      'Certificate of analysis reviewed against the specification for every lot until the audit of March closes.',
    reason: 'Questionnaire accepted; on-site audit scheduled.',
  },
  {
    supplier: 'Veltmoor Minerals',
    material: 'maize-starch',
    status: 'new' as const,
    reason: 'Second source under evaluation.',
  },
];

/** The justification of the demo's one reduced sampling plan (QA's validation record, invented). */
export const DEMO_REDUCED_PLAN = {
  supplier: DEMO_SUPPLIERS.quellmoor,
  material: 'lactose-monohydrate',
  justification:
    'Validated reduced sampling (VAL-SAM-014): manufacturer-sealed bags direct from the producing site, audited 2025, ' +
    '36 consecutive lots concordant on every container; dedicated product, no broker.',
};

/**
 * The supplier master: every supplier of the demo lots is recorded by QA and approved as a source
 * of its grades (qualified, every container sampled; one reduced plan with its justification), and
 * three sources in the other states.
 */
async function seedSuppliers(p: People, ids: DemoIds, log: Log): Promise<Map<string, number>> {
  const supplierIds = new Map<string, number>();
  const sup = async (name: string) => {
    if (!supplierIds.has(name)) {
      const s = await p.quinn.post<{ id: number }>('/api/suppliers', {
        name,
        kind: 'supplier',
        signature: p.quinn.sig(),
      });
      supplierIds.set(name, s.id);
    }
    return supplierIds.get(name)!;
  };
  const source = async (material: string, supplier: string, reason: string) =>
    p.quinn.post<{ id: number }>('/api/sources', {
      materialId: ids.materials[material],
      supplierId: await sup(supplier),
      reason,
      signature: p.quinn.sig(),
    });
  const today = daysAgo(60);
  const pairs = [...new Set(DEMO_LOTS.map((l) => `${l.material}|${l.supplier}`))];
  for (const pair of pairs) {
    const [material, supplier] = pair.split('|');
    const src = await source(material, supplier, 'Long-standing supplier of this grade.');
    const reduced = material === DEMO_REDUCED_PLAN.material && supplier === DEMO_REDUCED_PLAN.supplier;
    await p.quinn.post(`/api/sources/${src.id}/status`, {
      status: 'qualified',
      samplingPlan: reduced ? 'sqrt-n-plus-1' : 'every-container',
      samplingJustification: reduced ? DEMO_REDUCED_PLAN.justification : null,
      effectiveFrom: today,
      reviewBy: null,
      reason: 'Supplier audit passed; quality agreement signed.',
      signature: p.quinn.sig(),
    });
  }
  for (const x of DEMO_EXTRA_SOURCES) {
    const src = await source(x.material, x.supplier, x.reason);
    if (x.status === 'new') continue;
    await p.quinn.post(`/api/sources/${src.id}/status`, {
      status: x.status,
      conditions: 'conditions' in x ? x.conditions : null,
      samplingPlan: 'every-container',
      effectiveFrom: today,
      reason: x.reason,
      signature: p.quinn.sig(),
    });
  }
  log(
    `${supplierIds.size} suppliers, ${pairs.length + DEMO_EXTRA_SOURCES.length} sources (qualified, conditional, blocked, new)`,
  );
  return supplierIds;
}

async function seedLots(
  p: People,
  ids: DemoIds,
  supplierIds: Map<string, number>,
  log: Log,
): Promise<Record<string, number>> {
  const lotIds: Record<string, number> = {};
  for (const l of DEMO_LOTS) {
    const lot = await p.olga.post<LotDetail>('/api/lots', {
      materialId: ids.materials[l.material],
      supplierId: supplierIds.get(l.supplier),
      supplierLot: l.supplierLot,
      containerCount: l.containers,
      receivedDate: daysAgo(l.receivedDaysAgo),
      notes:
        l.state === 'rejected-after-investigation' || l.state === 'failed-open-investigation'
          ? null
          : (l.notes ?? null),
    });
    lotIds[l.key] = lot.id;
    await sample(p.olga, lot, l.receivedDaysAgo);
    if (l.state === 'awaiting-testing') continue;

    // Who does the work: Dana performs the paracetamol test (and verifies the citric acid
    // monohydrate test Olga performed); Olga does the rest; Victor verifies.
    const operator = l.key === 'B' ? p.dana : p.olga;
    const verifier = l.key === 'C' ? p.dana : p.victor;
    const test = await operator.post<{ id: number }>(`/api/lots/${lot.id}/tests`, {
      instrumentId: ids.instruments[l.instrument],
    });
    const files = containerFiles(l.key);
    const measured = l.measured ?? [...files.keys()];
    for (const seq of measured) await measure(operator, test.id, lot, seq, files.get(seq)!);
    if (l.state === 'partly-tested') {
      // The third container was measured with poor ATR contact: the quality gate refuses a verdict.
      const poor = demoSpectra().find((s) => s.kind === 'poor-contact' && s.lot === l.key);
      if (poor) await measure(operator, test.id, lot, poor.container!, poor);
      continue;
    }
    await operator.post(`/api/tests/${test.id}/perform`, { signature: operator.sig() });
    if (l.state === 'awaiting-verification') continue;
    const verdict = await verifier.post<{ outcome: string; investigation: { id: number; number: string } | null }>(
      `/api/tests/${test.id}/verify`,
      {
        signature: verifier.sig(),
        comment:
          l.state === 'passed'
            ? 'Raw spectra, scores, bands and instrument check reviewed.'
            : 'Reviewed; the failing container goes to QA as an investigation.',
      },
    );
    if (l.state === 'passed') {
      if (verdict.outcome !== 'passed')
        throw new Error(`demo seed: lot ${l.key} was expected to pass, got ${verdict.outcome}`);
      continue;
    }
    if (verdict.outcome !== 'failed' || !verdict.investigation)
      throw new Error(`demo seed: lot ${l.key} was expected to fail, got ${verdict.outcome}`);
    if (l.state === 'failed-open-investigation') continue;
    // Rejected after investigation: phase I finds no laboratory error, QA confirms the failure.
    const inv = verdict.investigation.id;
    await p.quinn.post(`/api/investigations/${inv}/phase1`, {
      ...PHASE1_NO_LAB_ERROR,
      summary:
        'No assignable laboratory error. The spectrum of the failing container matches citric acid monohydrate (library hint); loss on drying of the retained sample confirms the hydrate.',
      signature: p.quinn.sig(),
    });
    await p.quinn.post(`/api/investigations/${inv}/confirm`, {
      justification: l.notes ?? 'Failure confirmed: the container does not hold the ordered grade.',
      signature: p.quinn.sig(),
    });
  }
  log(`${DEMO_LOTS.length} lots: ${DEMO_LOTS.map((l) => `${l.key} ${l.state}`).join(', ')}`);
  return lotIds;
}

/** The release checks of every demo grade (QA's material master for disposition). */
const DEMO_CHECKS = [
  {
    key: 'coa-review',
    kind: 'coa-review',
    label: "Supplier's certificate of analysis reviewed against the specification",
  },
  { key: 'appearance', kind: 'appearance', label: 'Appearance of the sampled material as specified' },
];

/**
 * Disposition: QA approves a profile for every grade; for lot A (identity passed) Irene records the
 * checks and Quinn releases it; a reduced-plan lot of lactose (12 bags, 5 sampled); the ERP link:
 * Adam makes a machine account and a webhook to the local fake receiver (port 8090).
 */
async function seedDisposition(
  p: People & { adam: DemoSession },
  ids: DemoIds,
  supplierIds: Map<string, number>,
  lots: Record<string, number>,
  log: Log,
): Promise<void> {
  for (const [key, id] of Object.entries(ids.materials))
    await p.quinn.post(`/api/material-profiles/${id}`, {
      retestMonths: key === 'magnesium-stearate' ? 12 : 24,
      shelfLifeMonths: 36,
      riskClass: key === 'paracetamol' ? 'high' : 'medium',
      // sodium chloride is "identity by IR not suitable": its release asks for the test that replaces IR
      checks:
        key === 'sodium-chloride'
          ? [
              ...DEMO_CHECKS,
              { key: 'identity-chemical', kind: 'alternative-identity', label: SODIUM_CHLORIDE_REPLACEMENT_TEST },
            ]
          : DEMO_CHECKS,
      reason: 'Release checks of the site specification (demo).',
      signature: p.quinn.sig(),
    });
  const a = lots.A;
  await p.irene.post(`/api/lots/${a}/checks`, {
    checkKey: 'coa-review',
    outcome: 'conforms',
    reference: 'Supplier CoA QX-24-1187, checked against SPEC-LAC-03',
    signature: p.irene.sig(),
  });
  await p.irene.post(`/api/lots/${a}/checks`, {
    checkKey: 'appearance',
    outcome: 'conforms',
    signature: p.irene.sig(),
  });
  await p.quinn.post(`/api/lots/${a}/release`, {
    comment: 'Identity of every container confirmed and verified; CoA and appearance conform.',
    signature: p.quinn.sig(),
  });
  const reduced = await p.olga.post<LotDetail>('/api/lots', {
    materialId: ids.materials[DEMO_REDUCED_PLAN.material],
    supplierId: supplierIds.get(DEMO_REDUCED_PLAN.supplier),
    supplierLot: 'QX-24-1302',
    containerCount: 12,
    receivedDate: daysAgo(1),
    notes: 'Twelve sealed bags direct from the producer.',
  });
  await sample(p.olga, reduced, 1);
  const erp = await p.adam.post<{ token: string; name: string }>('/api/machine-accounts', {
    name: 'ERP (demo)',
    scopes: ['lots:receive', 'lots:read'],
    reason: 'Goods receipt and results for the demo ERP.',
  });
  await p.adam.post('/api/webhooks', {
    name: 'Demo ERP (local fake receiver)',
    url: 'http://127.0.0.1:8090/hooks',
    events: ['lot.received', 'lot.identity-passed', 'lot.identity-failed', 'lot.released', 'lot.rejected'],
  });
  log(
    `disposition: profiles for ${Object.keys(ids.materials).length} grades, lot A released, lot ${reduced.lotNumber} sampled under the reduced plan (5 of 12); machine account "${erp.name}" (token, shown once: ${erp.token}); webhook to http://127.0.0.1:8090/hooks`,
  );
}

/** A new hire whose account the administrator created; the temporary password is random and not published. */
export const NEW_HIRE = {
  username: 'tomas',
  fullName: 'Tomas Berg',
  email: 'tomas.berg@lindenhall.example',
  roles: ['operator'],
} as const;

/**
 * A role change that waits for the second administrator (two-person rule, docs/access.md): Adam
 * asks for the verifier role for Olga after her training; Sigrid confirms or declines it.
 */
export const ROLE_REQUEST = {
  username: 'olga',
  roles: ['operator', 'verifier'],
  reason: 'Completed the second-person review training (training record TR-207).',
} as const;

async function seedRoleRequest(adam: DemoSession, log: Log): Promise<void> {
  const users = await adam.get<{ id: number; username: string }[]>('/api/users');
  const olga = users.find((u) => u.username === ROLE_REQUEST.username)!;
  await adam.patch(`/api/users/${olga.id}`, { roles: [...ROLE_REQUEST.roles], reason: ROLE_REQUEST.reason });
  log('a role change (verifier for Olga) awaiting the second administrator');
}

async function seedNewHire(adam: DemoSession, log: Log): Promise<void> {
  await adam.post('/api/users', {
    ...NEW_HIRE,
    roles: [...NEW_HIRE.roles],
    temporaryPassword: `tmp-${randomBytes(12).toString('base64url')}`,
  });
  log(`account of a new hire (${NEW_HIRE.fullName}) awaiting first sign-in`);
}

/** The invented second source of paracetamol whose synthetic history drifts (demo data only). */
export const DEMO_TREND = {
  material: 'paracetamol',
  drifting: 'Brannock Pharma Materials (synthetic history)',
  prefix: 'SYN-PCM',
} as const;

/**
 * Trending and the periodic review in the demo: a synthetic history of 40 passed paracetamol
 * results over the past eight weeks from two sources (db/seeds/trend-history.ts: generated from a
 * demo container spectrum, scored by the engine, past times set by this seed only), one source
 * drifting; QA applies the run rules (the drift raises its signals) and records the audit-trail
 * review of the previous month.
 */
async function seedTrendDemo(db: Knex, p: People, ids: DemoIds, log: Log): Promise<void> {
  const lotB = DEMO_LOTS.find((l) => l.key === 'B')!;
  const spec = demoSpectra().find((s) => s.kind === 'container' && s.lot === 'B' && s.container === 1)!;
  const f = fileOf(spec);
  const instrumentId = ids.instruments[lotB.instrument];
  const check = await db('instrument_check')
    .where({ instrument_id: instrumentId, verdict: 'pass' })
    .orderBy('id', 'desc')
    .first('id');
  // the seed made the demo accounts and the passing instrument checks before this step
  const person = async (username: string) => {
    const found = await db('app_user').where({ username }).first('id', 'full_name');
    const u = must(found, `Demo account ${username}`);
    return { id: u.id, fullName: u.full_name };
  };
  await seedTrendHistory(db, {
    materialId: ids.materials[DEMO_TREND.material],
    methodId: ids.methods[DEMO_TREND.material],
    instrumentId,
    instrumentCheckId: must(check, `A passing check of instrument ${instrumentId}`).id,
    operator: await person('olga'),
    verifier: await person('victor'),
    sample: { data: f.data, name: f.name },
    sources: [lotB.supplier, DEMO_TREND.drifting],
    drifting: DEMO_TREND.drifting,
    points: 40,
    driftFrom: 24,
    driftPerPoint: 0.2,
    days: 56,
    prefix: DEMO_TREND.prefix,
  });
  const scan = await p.quinn.post<{ raised: number }>('/api/trending/scans', {});
  const now = new Date();
  const from = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth() - 1, 1)).toISOString().slice(0, 10);
  const to = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), 0)).toISOString().slice(0, 10);
  await p.quinn.post('/api/audit-reviews', {
    from,
    to,
    scope: [
      'failed-sign-ins',
      'failed-signatures',
      'role-changes',
      'invalidated-results',
      'gate-overrides',
      'integrity-alerts',
      'trend-signals',
    ],
    findings: 'No exceptions in the period: the demo site went live after it. No findings.',
    actions: 'none',
    signature: p.quinn.sig(),
  });
  log(
    `synthetic paracetamol history of 40 passed results, one drifting source (${scan.raised} trend signal(s)); audit-trail review of ${from} to ${to}`,
  );
}

export async function seedDemoSite(
  db: Knex,
  opts: { database?: string; log?: Log } = {},
): Promise<{ seeded: boolean; ids?: DemoIds }> {
  const t0 = Date.now();
  const log = opts.log ?? ((l: string) => console.log(`[seed] ${l} (${((Date.now() - t0) / 1000).toFixed(0)} s)`));
  if (await isDemoSeeded(db)) {
    // The new hire's account is the seed's last step: without it an earlier run stopped half-way.
    if (!(await db('app_user').where({ username: NEW_HIRE.username }).first())) {
      log(
        'WARNING: the demo site is incomplete (an earlier seed stopped half-way); run `npm run demo:reset` to start it again',
      );
    } else log('demo site already present; nothing to do');
    return { seeded: false };
  }
  const api = await DemoApi.start(opts.database);
  const sessions: DemoSession[] = [];
  try {
    const signIn = async (u: string) => {
      const s = await api.signIn(u);
      sessions.push(s);
      return s;
    };
    const p: People = {
      quinn: await signIn('quinn'),
      irene: await signIn('irene'),
      olga: await signIn('olga'),
      victor: await signIn('victor'),
      dana: await signIn('dana'),
    };
    const ids: DemoIds = { materials: {}, methods: {}, instruments: {}, references: {} };
    await seedInstruments(p, ids, log);
    await seedLibrary(p, ids, log);
    const supplierIds = await seedSuppliers(p, ids, log);
    const lots = await seedLots(p, ids, supplierIds, log);
    await seedTrendDemo(db, p, ids, log);
    const adam = await signIn('adam');
    await seedDisposition({ ...p, adam }, ids, supplierIds, lots, log);
    await seedRoleRequest(adam, log);
    await seedNewHire(adam, log);
    return { seeded: true, ids: { ...ids, lots } };
  } finally {
    for (const s of sessions) await s.signOut().catch(() => undefined);
    await api.close();
  }
}
