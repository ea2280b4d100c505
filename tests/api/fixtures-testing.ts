import type { Agent as SupertestAgent } from 'supertest';
/**
 * Fixtures of the testing API tests: an approved material (approved identity method, approved
 * references) and instruments with a passing, expired or failed instrument check.
 *
 * These rows are INSERTED DIRECTLY through the runtime database connection (the same restricted
 * account the server uses) by db/seeds/testing-library.ts, instead of going through the library
 * and instrument workflows, so the testing tests do not depend on those workflows' own rules
 * (uploader/approver segregation, specificity gate). Everything scientific is still real: the
 * reference and sample files are the real spectra in ../shared/reference-data, the reference
 * bands are picked by the engine, and the instrument check result is the engine's own
 * polystyrene check of the real film spectrum.
 */
import { invalidateLibraryCache } from '../../server/modules/library/approved-set';
import type { IdentityMethod } from '../../server/spectra';
import {
  type CheckState,
  dataFile,
  distinctAcquisition,
  FIBRES,
  REFERENCE_DATA,
  seedApprovedMaterial,
  seedInstrument,
  type SeededMaterial,
} from '../../db/seeds/testing-library';
import type { Role } from '../../server/lib/contract';
import { agentFor, db, makeUser, sig, uniqueName } from './helpers';

export { dataFile, distinctAcquisition, FIBRES, REFERENCE_DATA, type CheckState };
export type ApprovedMaterial = SeededMaterial;

/**
 * Accounts made by this file's tests. The test database is shared by all files, and mail to a
 * role goes to every active account holding it, so retire() deactivates them in afterAll: later
 * files then see only their own verifiers and QA managers.
 */
const made: number[] = [];

export async function agent(roles: Role[]) {
  const a = await agentFor(roles);
  made.push(a.user.id);
  return a;
}

export async function account(roles: Role[]) {
  const u = await makeUser(roles);
  made.push(u.id);
  return u;
}

export async function retire(): Promise<void> {
  if (made.length) await db()('app_user').whereIn('id', made.splice(0)).update({ active: 0 });
  qaCache = null;
  qaAgentCache = null;
  samplerCache = null;
  sourceCache.clear();
  authorCache = null;
}

let qaCache: { id: number; fullName: string } | null = null;
let authorCache: { id: number; fullName: string } | null = null;
/** The QA manager who wrote the seeded methods and uploaded their references (never their approver). */
async function fixtureAuthor() {
  if (!authorCache) {
    authorCache = await makeUser(['qa_manager']);
    made.push(authorCache.id);
  }
  return authorCache;
}
async function fixtureQa() {
  if (!qaCache) {
    qaCache = await makeUser(['qa_manager']);
    made.push(qaCache.id);
  }
  return qaCache;
}

/** An active material with an approved method and approved references made from real files. */
export async function approvedMaterial(opts: {
  name: string;
  referenceFiles: string[];
  method?: IdentityMethod;
  code?: string;
}): Promise<ApprovedMaterial> {
  const code = (opts.code ?? uniqueName('MAT'))
    .toUpperCase()
    .replace(/[^A-Z0-9]/g, '')
    .slice(0, 30);
  const m = await seedApprovedMaterial(db(), await fixtureQa(), { ...opts, code, author: await fixtureAuthor() });
  invalidateLibraryCache();
  return m;
}

/**
 * A mid-IR ATR instrument. 'valid': the real polystyrene film checked against site-approved ATR
 * positions taken from that film (passes), valid for 24 h. 'expired': the same passing check
 * whose validity ended. 'failed': checked against the Ph. Eur. 2.2.24 FT positions (fails on this
 * ATR film). 'none': no check at all.
 */
export async function instrumentWithCheck(
  state: CheckState,
  opts: { technique?: string; sampling?: string; validUntil?: Date } = {},
) {
  return seedInstrument(db(), await fixtureQa(), { name: uniqueName('FTIR-'), state, ...opts });
}

// ---- request helpers (supertest agents signed in through tests/api/helpers.ts agentFor)

type Agent = SupertestAgent;

let qaAgentCache: Awaited<ReturnType<typeof agentFor>> | null = null;
/** A QA manager signed in through the API, for the supplier master steps of the fixtures. */
export async function fixtureQaAgent() {
  if (!qaAgentCache) {
    qaAgentCache = await agentFor(['qa_manager']);
    made.push(qaAgentCache.user.id);
  }
  return qaAgentCache;
}

const sourceCache = new Map<number, number>();
/**
 * A supplier recorded by QA and approved as a source of the material with the given status
 * (default: qualified, every container sampled), through the supplier-master API. Returns its id.
 */
export async function supplierFor(
  materialId: number,
  opts: {
    status?: string;
    samplingPlan?: string;
    samplingJustification?: string;
    conditions?: string;
    fresh?: boolean;
  } = {},
): Promise<{ supplierId: number; sourceId: number }> {
  if (!opts.fresh && !opts.status && sourceCache.has(materialId)) {
    const sourceId = sourceCache.get(materialId)!;
    const row = (await db()('material_source').where({ id: sourceId }).first())!;
    return { supplierId: row.supplier_id, sourceId };
  }
  const qa = await fixtureQaAgent();
  const s = await qa.agent
    .post('/api/suppliers')
    .send({ name: uniqueName('Brightwater Fibres '), kind: 'supplier', signature: sig(qa.user) });
  if (s.status !== 201) throw new Error(`supplier failed: ${s.status} ${JSON.stringify(s.body)}`);
  const src = await qa.agent
    .post('/api/sources')
    .send({ materialId, supplierId: s.body.id, reason: 'approved for the tests', signature: sig(qa.user) });
  if (src.status !== 201) throw new Error(`source failed: ${src.status} ${JSON.stringify(src.body)}`);
  const status = opts.status ?? 'qualified';
  if (status !== 'new') {
    const st = await qa.agent.post(`/api/sources/${src.body.id}/status`).send({
      status,
      samplingPlan: opts.samplingPlan ?? 'every-container',
      samplingJustification: opts.samplingJustification ?? null,
      conditions: opts.conditions ?? null,
      effectiveFrom: new Date().toISOString().slice(0, 10),
      reason: `set to ${status} for the tests`,
      signature: sig(qa.user),
    });
    if (st.status !== 200) throw new Error(`source status failed: ${st.status} ${JSON.stringify(st.body)}`);
  }
  if (!opts.status && !opts.fresh) sourceCache.set(materialId, src.body.id as number);
  return { supplierId: s.body.id as number, sourceId: src.body.id as number };
}

/** A disposition profile of the material approved by the fixture QA manager (retest 24 months, CoA review and appearance). */
export async function profileFor(
  materialId: number,
  checks: { key: string; kind: string; label: string }[] = [
    { key: 'coa-review', kind: 'coa-review', label: 'CoA reviewed against the specification' },
    { key: 'appearance', kind: 'appearance', label: 'Appearance as specified' },
  ],
) {
  const qa = await fixtureQaAgent();
  const res = await qa.agent.post(`/api/material-profiles/${materialId}`).send({
    retestMonths: 24,
    shelfLifeMonths: 36,
    riskClass: 'medium',
    checks,
    reason: 'profile for the tests',
    signature: sig(qa.user),
  });
  if (res.status !== 201) throw new Error(`profile failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body;
}

let samplerCache: Awaited<ReturnType<typeof agentFor>> | null = null;
/** An operator who clears the booth and samples for the fixtures. */
export async function fixtureSampler() {
  if (!samplerCache) {
    samplerCache = await agentFor(['operator']);
    made.push(samplerCache.user.id);
  }
  return samplerCache;
}

/**
 * Signed line clearance and sampling record of a lot (sampling precedes testing): the named
 * containers, or as many as the lot's plan asks (every container, or the first 1 + sqrt(N)).
 */
export async function sampleLot(lotId: number, containerIds?: number[]) {
  const s = await fixtureSampler();
  const lot = (await s.agent.get(`/api/lots/${lotId}`)).body as {
    containers: { id: number }[];
    source: { sampleCount: number | null };
  };
  const clear = await s.agent
    .post(`/api/lots/${lotId}/line-clearance`)
    .send({ area: 'Sampling booth 1', previousUse: 'empty, cleaned', signature: sig(s.user) });
  if (clear.status !== 201) throw new Error(`line clearance failed: ${clear.status} ${JSON.stringify(clear.body)}`);
  const ids = containerIds ?? lot.containers.slice(0, lot.source.sampleCount ?? lot.containers.length).map((c) => c.id);
  const res = await s.agent.post(`/api/lots/${lotId}/sampling`).send({
    lineClearanceId: clear.body.clearances.at(-1).id,
    sampledAt: new Date().toISOString(),
    tool: 'stainless steel sampling spear ST-04, cleaned',
    containers: ids.map((containerId) => ({ containerId, opened: true, sampled: true, resealed: true })),
    reserve: { quantity: 50, unit: 'g', location: 'Reserve sample store, shelf R2' },
    signature: sig(s.user),
  });
  if (res.status !== 201) throw new Error(`sampling failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body;
}

export async function receiveLot(
  agent: Agent,
  materialId: number,
  containerCount: number,
  extra: Record<string, unknown> = {},
) {
  const { sample = true, ...rest } = extra;
  const supplierId = rest.supplierId ?? (await supplierFor(materialId)).supplierId;
  const res = await agent.post('/api/lots').send({
    materialId,
    supplierId,
    supplierLot: 'SL-' + Math.random().toString(36).slice(2, 8).toUpperCase(),
    containerCount,
    receivedDate: new Date().toISOString().slice(0, 10),
    ...rest,
  });
  if (res.status !== 201) throw new Error(`receipt failed: ${res.status} ${JSON.stringify(res.body)}`);
  if (sample) await sampleLot(res.body.id as number);
  return res.body as { id: number; lotNumber: string; containers: { id: number; label: string; seq: number }[] };
}

export async function startTest(agent: Agent, lotId: number, instrumentId: number): Promise<number> {
  const res = await agent.post(`/api/lots/${lotId}/tests`).send({ instrumentId });
  if (res.status !== 201) throw new Error(`start failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.id as number;
}

export function uploadRequest(
  agent: Agent,
  testId: number,
  target: { label?: string; containerId?: number; reason?: string; confirmIdentifiers?: boolean },
  rel: string,
  fileName?: string,
) {
  const f = distinctAcquisition(rel);
  lastSent = f.buffer;
  const req = agent.post(`/api/tests/${testId}/measurements`);
  if (target.label) req.field('label', target.label);
  if (target.containerId) req.field('containerId', String(target.containerId));
  if (target.reason) req.field('reason', target.reason);
  if (target.confirmIdentifiers) req.field('confirmIdentifiers', 'true');
  return req.attach('file', f.buffer, { filename: fileName ?? f.name, contentType: 'text/csv' });
}

let lastSent: Buffer | null = null;
/** The bytes of the last file uploadRequest sent (a distinct acquisition made from the real file). */
export function lastUploadedBytes(): Buffer {
  if (!lastSent) throw new Error('nothing uploaded yet');
  return lastSent;
}

export async function upload(
  agent: Agent,
  testId: number,
  target: { label?: string; containerId?: number; reason?: string; confirmIdentifiers?: boolean },
  rel: string,
  fileName?: string,
) {
  const res = await uploadRequest(agent, testId, target, rel, fileName);
  if (res.status !== 201) throw new Error(`upload failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as { id: number; verdict: 'pass' | 'fail' | 'invalid'; matchScore: number | null; label: string };
}

/** Row counts of the tables an upload writes, to prove that a refused upload stored nothing. */
export async function writeCounts() {
  const k = db();
  const count = async (t: string) => Number((await k(t).count({ n: '*' }).first())!.n);
  return {
    storedFile: await count('stored_file'),
    measurement: await count('measurement'),
    audit: await count('audit_event'),
  };
}

/**
 * Sends every due message of the shared outbox to the fake SMTP server (processOutbox sends at
 * most 20 per call; other test files leave theirs queued too). Call in afterAll so that later
 * files find an empty queue, and before reading capturedMail().
 */
export async function flushMail(): Promise<void> {
  const { initMail, processOutbox } = await import('../../server/lib/mail');
  const { loadConfig } = await import('../../server/lib/config');
  await initMail(loadConfig({ smtp: null }));
  for (let i = 0; i < 200; i++) if ((await processOutbox(db(), 50)) === 0) break;
}
