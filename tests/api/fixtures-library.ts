/** Fixture builders of the reference-library and instrument API tests. */
import fs from 'node:fs';
import path from 'node:path';
import { createHash } from 'node:crypto';
import type { Agent } from 'supertest';
import { repoRoot } from '../../db/config';
import { uniqueName } from './helpers';

/** The team's real spectra (../shared/reference-data, see its README for sources and licences). */
export const REFERENCE_DATA = path.resolve(repoRoot, '../shared/reference-data');
export const refData = (rel: string): Buffer => fs.readFileSync(path.join(REFERENCE_DATA, rel));
export const fibre = (name: string): Buffer => refData(path.join('atr-ftir-fibres', name));

export type Signer = { username: string; password: string };
export const sigOf = (u: Signer) => ({ username: u.username, password: u.password });

export const sha256 = (b: Buffer | string): string => createHash('sha256').update(b).digest('hex');

/** Canonical JSON written independently of server/lib/canonical.ts: keys sorted, no whitespace. */
export function canonical(v: unknown): string {
  const sort = (x: unknown): unknown => {
    if (Array.isArray(x)) return x.map(sort);
    if (x && typeof x === 'object') {
      return Object.fromEntries(
        Object.keys(x as object)
          .sort()
          .filter((k) => (x as Record<string, unknown>)[k] !== undefined)
          .map((k) => [k, sort((x as Record<string, unknown>)[k])]),
      );
    }
    return x;
  };
  return JSON.stringify(sort(v));
}

/** A material code unique to this run. */
export const materialCode = (prefix: string) =>
  uniqueName(prefix)
    .toUpperCase()
    .replace(/[^A-Z0-9]/g, '')
    .slice(0, 30);

export async function createMaterial(agent: Agent, name: string, over: Record<string, unknown> = {}) {
  const res = await agent
    .post('/api/materials')
    .send({ code: materialCode(name.slice(0, 4)), name, grade: 'test grade', techniques: ['mid-ir-atr'], ...over });
  if (res.status !== 201) throw new Error(`material: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as { id: number; code: string; draftMethodId: number };
}

export type Party = { agent: Agent; user: Signer & { id: number } };

/**
 * Approves a method version (signed by `signer`). A first version is approved together with the
 * material's draft references. When materials of other test files (same database) block the gate and
 * `overrider` is given, the overrider requests an override and the signer confirms it (setup only).
 */
export async function approveMethod(
  agent: Agent,
  signer: Signer,
  methodId: number,
  overrider?: Party,
  extra: Record<string, unknown> = {},
) {
  let res = await agent.post(`/api/methods/${methodId}/approve`).send({ signature: sigOf(signer), ...extra });
  if (res.status === 409 && res.body.error.code === 'SPECIFICITY_GATE' && overrider) {
    const o = await overrider.agent.post(`/api/methods/${methodId}/gate-override`).send({
      justification: 'Test setup: other test files share this database.',
      changeControl: 'CC-TEST-SETUP',
      signature: sigOf(overrider.user),
    });
    if (o.status !== 201) throw new Error(`override request: ${o.status} ${JSON.stringify(o.body)}`);
    res = await agent
      .post(`/api/methods/${methodId}/approve`)
      .send({ signature: sigOf(signer), overrideId: o.body.id, ...extra });
  }
  if (res.status !== 200) throw new Error(`method approve: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body;
}

/**
 * A material's first method version approved together with its first reference: `uploader`
 * (who also created the material and wrote version 1) uploads the file, `approver` signs both.
 */
export async function approveFirstVersion(
  uploader: Party,
  approver: Party,
  m: { id: number; draftMethodId: number },
  file: { name: string; data: Buffer },
  overrider?: Party,
) {
  const ref = await uploadOne(uploader.agent, m.id, file.name, file.data);
  const method = await approveMethod(approver.agent, approver.user, m.draftMethodId, overrider);
  return { method, ref };
}

export async function upload(
  agent: Agent,
  materialId: number,
  files: { name: string; data: Buffer }[],
  fields: Record<string, string> = {},
) {
  let req = agent.post(`/api/materials/${materialId}/references`);
  for (const f of files) req = req.attach('files', f.data, f.name);
  for (const [k, v] of Object.entries(fields)) req = req.field(k, v);
  return req;
}

export async function uploadOne(agent: Agent, materialId: number, name: string, data: Buffer) {
  const res = await upload(agent, materialId, [{ name, data }], {
    supplier: 'Test supplier',
    supplierLot: 'L-1',
    measuredHow: 'diamond ATR, 4 cm-1',
  });
  if (res.status !== 201) throw new Error(`upload: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body[0] as { id: number; code: string; bands: { position: number; assignment: string }[] };
}

/** Copy of a two-column CSV spectrum with every y multiplied and a little deterministic noise added. */
export function perturbedCsv(data: Buffer, seed = 7, noise = 0.002, scale = 1.03): Buffer {
  let s = seed;
  const rnd = () => {
    s = (s * 1103515245 + 12345) % 2147483648;
    return s / 2147483648 - 0.5;
  };
  const lines = data.toString('utf8').trim().split(/\r?\n/);
  const out = [lines[0]];
  for (const line of lines.slice(1)) {
    const [x, y] = line.split(',').map(Number);
    out.push(`${x},${(y * scale + noise * rnd()).toFixed(6)}`);
  }
  return Buffer.from(out.join('\n') + '\n');
}

/** Copy of a two-column CSV spectrum with every wavenumber moved by `shift` cm-1. */
export function shiftedCsv(data: Buffer, shift: number): Buffer {
  const lines = data.toString('utf8').trim().split(/\r?\n/);
  const out = [
    lines[0],
    ...lines.slice(1).map((l) => {
      const [x, y] = l.split(',');
      return `${(Number(x) + shift).toFixed(4)},${y}`;
    }),
  ];
  return Buffer.from(out.join('\n') + '\n');
}

/**
 * A material whose first method version can be approved at once: version 1 under mid-IR
 * transmission (a technique the other test files leave empty, so their materials do not meet this
 * one in the specificity gate) with one draft reference, uploaded by `agent` (the author).
 * Give each material of a file a chemically different fibre.
 */
export async function approvableMaterial(agent: Agent, name: string, fibreFile: string) {
  const m = await createMaterial(agent, name, { techniques: ['mid-ir-transmission'] });
  await uploadOne(agent, m.id, fibreFile, fibre(fibreFile));
  return m;
}
