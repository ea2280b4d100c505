/**
 * The audit chain anchored outside the database (issue 12 item 4; docs/compliance.md, "Audit
 * chain anchored outside the database").
 *
 * Checkpoints: every AUDIT_CHECKPOINT_MINUTES (hourly by default) the background job reads the
 * audit head (event count and head hash, no lock), signs a small JSON document with the site's
 * signing key, has the signature time-stamped (RFC 3161), writes the document as a file to the
 * checkpoint folder (AUDIT_CHECKPOINT_DIR/<database>/), then records it, mails it to QA and writes
 * its audit event in one short transaction. The signing and the time-stamp request happen before
 * that transaction: nothing slow runs while the audit head is locked.
 *
 * Chain check: the incremental check reads the latest checkpoint FILE (not the database copy),
 * verifies its signature and time-stamp, requires the event it names to have the hash it states
 * (recomputed with the chain key), and walks only the events after it. The full check walks every
 * event and compares every checkpoint file; it runs as a background job with progress, so no
 * request walks the trail for minutes.
 */
import { iso } from '../../lib/dates';
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import type { Knex } from 'knex';
import { repoRoot } from '../../../db/config';
import { appendAudit, chainState, walkChain, SYSTEM_ACTOR, type Actor } from '../../lib/audit';
import { canonicalJson, sha256Hex } from '../../lib/canonical';
import type { AppConfig } from '../../lib/config';
import type { ChainCheckpointInfo, ChainReport, ChainRun } from '../../lib/contract';
import type { AuditChainRunRow } from '../../lib/db-tables';
import { notFound } from '../../lib/errors';
import { startJob, type RunningJob } from '../../lib/lease';
import { enqueueMailToRole } from '../../lib/mail';
import {
  loadSigningMaterial,
  signingSettingsFrom,
  timeStamperFor,
  tsaTrustedPem,
  verifyTimeStampToken,
} from '../../lib/signing';
import type { AuthUser } from '../../lib/http';

export const CHECKPOINT_KIND = 'drumline-audit-checkpoint';

export interface CheckpointPayload {
  kind: typeof CHECKPOINT_KIND;
  site: string;
  database: string;
  eventCount: number;
  headHash: string;
  keyedFrom: number | null;
  keyId: string | null;
  createdAt: string;
}

/** The file's content: the payload, the site's RSA signature over its canonical JSON, and the time-stamp. */
export interface CheckpointDocument {
  payload: CheckpointPayload;
  /** base64 RSA-SHA256 (PKCS#1 v1.5) over canonicalJson(payload) */
  signature: string;
  /** base64 DER of the signing certificate; its SHA-256 must be the site's fingerprint */
  signerCertificate: string;
  /** base64 DER RFC 3161 token over the signature bytes */
  timeStampToken: string;
}

function databaseOf(db: Knex): string {
  const conn = db.client.config.connection as { database?: string } | undefined;
  return conn?.database ?? 'drumline';
}

export function checkpointDir(db: Knex, cfg: Pick<AppConfig, 'auditCheckpointDir'>): string {
  return path.join(path.resolve(repoRoot, cfg.auditCheckpointDir), databaseOf(db));
}

/** Writes a checkpoint of the current head (unless the head is where the last one left it). */
export async function writeCheckpoint(
  db: Knex,
  cfg: AppConfig,
  opts: { force?: boolean; actor?: Actor } = {},
): Promise<{ id: number; file: string; eventCount: number } | null> {
  const state = await chainState(db);
  if (state.headId === 0) return null;
  const last = await db('audit_checkpoint').orderBy('id', 'desc').first('event_count');
  // the last checkpoint's own audit event moves the head by one: nothing else happened since
  if (!opts.force && last && state.headId <= Number(last.event_count) + 1) return null;
  const payload: CheckpointPayload = {
    kind: CHECKPOINT_KIND,
    site: cfg.siteName,
    database: databaseOf(db),
    eventCount: state.headId,
    headHash: state.headHash,
    keyedFrom: state.keyedFrom,
    keyId: state.keyId,
    createdAt: new Date().toISOString(),
  };
  const m = loadSigningMaterial(signingSettingsFrom(cfg));
  const signature = crypto.sign('sha256', Buffer.from(canonicalJson(payload)), m.key);
  const token = await timeStamperFor(cfg)(signature);
  const doc: CheckpointDocument = {
    payload,
    signature: signature.toString('base64'),
    signerCertificate: m.certDer.toString('base64'),
    timeStampToken: token.toString('base64'),
  };
  const text = JSON.stringify(doc, null, 2) + '\n';
  const dir = checkpointDir(db, cfg);
  fs.mkdirSync(dir, { recursive: true, mode: 0o750 });
  const stamp = payload.createdAt.replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');
  const file = `checkpoint-${String(payload.eventCount).padStart(12, '0')}-${stamp}.json`;
  const tmp = path.join(dir, `.${file}.${process.pid}.tmp`);
  fs.writeFileSync(tmp, text, { mode: 0o640 });
  fs.renameSync(tmp, path.join(dir, file));
  const check = verifyCheckpointDocument(doc, cfg);
  const id = await db.transaction(async (trx) => {
    const [id] = await trx('audit_checkpoint').insert({
      event_count: payload.eventCount,
      head_hash: payload.headHash,
      key_id: payload.keyId,
      keyed_from: payload.keyedFrom,
      created_at: new Date(payload.createdAt),
      time_stamped_at: check.timeStampedAt ? new Date(check.timeStampedAt) : null,
      file_name: file,
      file_sha256: sha256Hex(text),
      document: text,
    });
    await enqueueMailToRole(
      trx,
      'qa_manager',
      `Audit trail checkpoint: ${payload.eventCount} events`,
      `The audit trail of ${payload.site} (database ${payload.database}) held ${payload.eventCount} events at ` +
        `${payload.createdAt}; the last event's hash is ${payload.headHash}.\n\n` +
        `Keep this message: the chain check compares the trail with these checkpoints, so a rewrite of the ` +
        `trail inside the database is found. The signed, time-stamped checkpoint follows (file ${file}).\n\n${text}`,
    );
    await appendAudit(trx, {
      actor: opts.actor ?? SYSTEM_ACTOR,
      action: 'audit.checkpoint-written',
      entityType: 'audit_checkpoint',
      entityId: Number(id),
      after: { eventCount: payload.eventCount, headHash: payload.headHash, file, timeStampedAt: check.timeStampedAt },
    });
    return Number(id);
  });
  return { id, file, eventCount: payload.eventCount };
}

/** Checks a checkpoint document's signature (by the site's key) and its time-stamp. */
export function verifyCheckpointDocument(
  doc: CheckpointDocument,
  cfg: AppConfig,
): { valid: boolean; problem?: string; timeStampedAt: string | null } {
  try {
    if (doc.payload?.kind !== CHECKPOINT_KIND)
      return { valid: false, problem: 'not a checkpoint', timeStampedAt: null };
    const certDer = Buffer.from(doc.signerCertificate, 'base64');
    const site = loadSigningMaterial(signingSettingsFrom(cfg));
    if (sha256Hex(certDer) !== site.fingerprint)
      return { valid: false, problem: 'not signed with the site signing certificate', timeStampedAt: null };
    const cert = new crypto.X509Certificate(certDer);
    const signature = Buffer.from(doc.signature, 'base64');
    if (!crypto.verify('sha256', Buffer.from(canonicalJson(doc.payload)), cert.publicKey, signature))
      return { valid: false, problem: 'its signature does not verify (the file was changed)', timeStampedAt: null };
    const ts = verifyTimeStampToken(Buffer.from(doc.timeStampToken, 'base64'), signature, tsaTrustedPem(cfg));
    if (!ts.valid)
      return { valid: false, problem: `its time-stamp does not verify: ${ts.problem}`, timeStampedAt: null };
    return { valid: true, timeStampedAt: ts.time };
  } catch (e) {
    return { valid: false, problem: `it cannot be read: ${(e as Error).message}`, timeStampedAt: null };
  }
}

interface CheckpointFile {
  file: string;
  doc: CheckpointDocument | null;
  valid: boolean;
  problem?: string;
  timeStampedAt: string | null;
}

/** Checkpoint files of this database, oldest first (by event count, then name). */
function readCheckpointFiles(db: Knex, cfg: AppConfig, which: 'latest' | 'all'): CheckpointFile[] {
  const dir = checkpointDir(db, cfg);
  if (!fs.existsSync(dir)) return [];
  let names = fs
    .readdirSync(dir)
    .filter((n) => /^checkpoint-\d+-[0-9TZ]+\.json$/.test(n))
    .sort();
  if (which === 'latest') names = names.slice(-1);
  return names.map((file) => {
    let doc: CheckpointDocument;
    try {
      doc = JSON.parse(fs.readFileSync(path.join(dir, file), 'utf8')) as CheckpointDocument;
    } catch {
      return { file, doc: null, valid: false, problem: 'it is not JSON', timeStampedAt: null };
    }
    const v = verifyCheckpointDocument(doc, cfg);
    if (v.valid && doc.payload.database !== databaseOf(db))
      return { file, doc, valid: false, problem: 'it belongs to another database', timeStampedAt: null };
    return { file, doc, ...v };
  });
}

const info = (f: CheckpointFile): ChainCheckpointInfo => ({
  eventCount: f.doc!.payload.eventCount,
  headHash: f.doc!.payload.headHash,
  createdAt: f.doc!.payload.createdAt,
  timeStampedAt: f.timeStampedAt,
  file: f.file,
});

function checkpointProblem(
  f: CheckpointFile,
  state: Awaited<ReturnType<typeof chainState>>,
): { brokenAt: number; problem: string } | null {
  if (!f.valid) return { brokenAt: 1, problem: `checkpoint file ${f.file} does not verify: ${f.problem}` };
  const p = f.doc!.payload;
  if (state.headId < p.eventCount)
    return {
      brokenAt: state.headId + 1,
      problem: `the trail holds ${state.headId} events but checkpoint ${f.file} counted ${p.eventCount} (events removed)`,
    };
  if (p.keyedFrom !== null && p.keyedFrom !== state.keyedFrom)
    return {
      brokenAt: Math.min(p.keyedFrom, state.keyedFrom ?? p.keyedFrom),
      problem: `the keyed chain starts at event ${state.keyedFrom ?? 'none'} but checkpoint ${f.file} says ${p.keyedFrom}`,
    };
  return null;
}

/**
 * The chain check of a request: from the latest checkpoint file on (incremental), or from the
 * first event when there is none yet.
 */
export async function checkChain(db: Knex, cfg: AppConfig): Promise<ChainReport> {
  const state = await chainState(db);
  const latest = readCheckpointFiles(db, cfg, 'latest')[0];
  if (!latest)
    return { ...(await walkChain(db)), mode: 'full', checkedFrom: 1, checkpoint: null, keyedFrom: state.keyedFrom };
  const context = {
    mode: 'incremental' as const,
    keyedFrom: state.keyedFrom,
    checkpoint: latest.doc ? info(latest) : null,
  };
  const bad = checkpointProblem(latest, state);
  if (bad) return { ok: false, events: 0, ...bad, ...context, checkedFrom: 1 };
  const p = latest.doc!.payload;
  // The checkpointed event is re-hashed too (its link comes from the event before it).
  const before = await db('audit_event')
    .where({ id: p.eventCount - 1 })
    .first('hash');
  const report = await walkChain(db, {
    from: p.eventCount,
    prevHash: p.eventCount === 1 ? '0'.repeat(64) : (before?.hash ?? ''),
    anchors: new Map([[p.eventCount, { hash: p.headHash, label: `checkpoint ${latest.file}` }]]),
  });
  return { ...report, ...context, checkedFrom: p.eventCount };
}

/** The full check: every event, every checkpoint file. Reports progress through `onProgress`. */
export async function fullCheck(
  db: Knex,
  cfg: AppConfig,
  onProgress?: (checked: number) => Promise<void> | void,
): Promise<ChainReport> {
  const state = await chainState(db);
  const files = readCheckpointFiles(db, cfg, 'all');
  const anchors = new Map<number, { hash: string; label: string }>();
  for (const f of files) {
    const bad = checkpointProblem(f, state);
    if (bad) return { ok: false, events: 0, ...bad, mode: 'full', checkedFrom: 1, checkpointsCompared: 0 };
    anchors.set(f.doc!.payload.eventCount, { hash: f.doc!.payload.headHash, label: `checkpoint ${f.file}` });
  }
  const report = await walkChain(db, { anchors, onProgress });
  return {
    ...report,
    mode: 'full',
    checkedFrom: 1,
    keyedFrom: state.keyedFrom,
    checkpoint: files.length ? info(files.at(-1)!) : null,
    checkpointsCompared: files.length,
  };
}

// ---- the full check as a background run

function toRun(r: AuditChainRunRow): ChainRun {
  return {
    id: r.id,
    // a text column holding the contract's values (this module writes only those)
    status: r.status as ChainRun['status'],
    requestedAt: new Date(r.requested_at).toISOString(),
    startedAt: iso(r.started_at),
    finishedAt: iso(r.finished_at),
    total: r.total,
    checked: r.checked,
    result: r.result ? (JSON.parse(r.result) as ChainReport) : null,
    error: r.error ?? null,
  };
}

export async function getChainRun(db: Knex, id: number): Promise<ChainRun> {
  const r = await db('audit_chain_run').where({ id }).first();
  if (!r) throw notFound('The chain check');
  return toRun(r);
}

/** Asks for a full check (auditor, QA, administrator); the background job runs it. */
export async function requestFullCheck(db: Knex, user: AuthUser, ip: string | null): Promise<ChainRun> {
  const open = await db('audit_chain_run').whereIn('status', ['queued', 'running']).orderBy('id').first();
  if (open) return toRun(open);
  const id = await db.transaction(async (trx) => {
    const [id] = await trx('audit_chain_run').insert({
      requested_by: user.id,
      requested_at: new Date(),
      status: 'queued',
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'audit.chain-check-requested',
      entityType: 'audit_chain_run',
      entityId: id,
      ip,
    });
    return id;
  });
  return getChainRun(db, id);
}

/** One tick of the anchor job: a queued full check first; a due checkpoint after. */
export async function anchorTick(db: Knex, cfg: AppConfig): Promise<void> {
  const run = await db('audit_chain_run').where({ status: 'queued' }).orderBy('id').first('id');
  if (run) {
    await db('audit_chain_run')
      .where({ status: 'running' })
      .update({ status: 'failed', finished_at: new Date(), error: 'interrupted (the app server running it stopped)' });
    const total = (await chainState(db)).headId;
    await db('audit_chain_run').where({ id: run.id }).update({ status: 'running', started_at: new Date(), total });
    try {
      const report = await fullCheck(db, cfg, (checked) =>
        db('audit_chain_run').where({ id: run.id }).update({ checked }),
      );
      await db('audit_chain_run')
        .where({ id: run.id })
        .update({
          status: 'finished',
          finished_at: new Date(),
          checked: report.events,
          result: JSON.stringify(report),
        });
      await db.transaction((trx) =>
        appendAudit(trx, {
          actor: SYSTEM_ACTOR,
          action: 'audit.chain-checked',
          entityType: 'audit_chain_run',
          entityId: run.id,
          after: report,
        }),
      );
    } catch (e) {
      await db('audit_chain_run')
        .where({ id: run.id })
        .update({ status: 'failed', finished_at: new Date(), error: String((e as Error).message).slice(0, 2000) });
      throw e;
    }
  }
  if (cfg.auditCheckpointMinutes > 0) {
    const last = await db('audit_checkpoint').orderBy('id', 'desc').first('created_at');
    if (!last || Date.now() - new Date(last.created_at).getTime() >= cfg.auditCheckpointMinutes * 60_000)
      await writeCheckpoint(db, cfg);
  }
}

export const ANCHOR_LEASE = 'audit-anchor';
let job: RunningJob | null = null;

export function startAnchorJob(db: Knex, cfg: AppConfig, intervalMs = 5000): RunningJob {
  job ??= startJob(db, { name: ANCHOR_LEASE, intervalMs, leaseMs: 300_000, run: (d) => anchorTick(d, cfg) });
  return job;
}

export async function stopAnchorJob(): Promise<void> {
  await job?.stop();
  job = null;
}
