/**
 * The compute pool: worker threads (piscina) that read, check and score uploaded spectra, hash
 * raw files and estimate password strength, so that a big upload never holds the event loop and
 * every other request (the health check included) keeps answering (docs/compliance.md, "Hardened
 * inputs"; measured by `npm run bench -- health`).
 *
 * Threads: WORKER_THREADS (default: the number of cores minus one, at least 1, at most 4), started
 * on first use and ended after a minute idle; idle threads never keep the process alive. The
 * worker is TypeScript, loaded through tsx like the server itself.
 */
import { createRequire } from 'node:module';
import os from 'node:os';
import { pathToFileURL } from 'node:url';
import { Piscina } from 'piscina';
import { computeDuration } from '../lib/metrics';
import { ownsItsMemory } from '../lib/upload';
import {
  type IdentityMethod,
  type PerformanceCheck,
  type PreparedReference,
  type Spectrum,
  SpectrumError,
  type SpectrumErrorCode,
} from '../spectra';
import type { InstrumentCheckOutput, MeasureOutput, ReferenceOutput, StrengthOutput, Task, TaskReply } from './tasks';

let pool: Piscina | null = null;

export function workerThreads(): number {
  const env = Number(process.env.WORKER_THREADS);
  if (Number.isInteger(env) && env > 0) return env;
  return Math.max(1, Math.min(4, os.availableParallelism() - 1));
}

function getPool(): Piscina {
  if (pool) return pool;
  const tsx = pathToFileURL(createRequire(import.meta.url).resolve('tsx')).href;
  const threads = workerThreads();
  pool = new Piscina({
    filename: new URL('./compute-worker.ts', import.meta.url).href,
    execArgv: ['--import', tsx],
    minThreads: 0,
    maxThreads: threads,
    idleTimeout: 60_000,
    // One task at a time per thread: a queue of big files waits instead of sharing a core.
    concurrentTasksPerWorker: 1,
  });
  return pool;
}

/** Ends the threads (graceful shutdown, end of a benchmark). */
export async function closeComputePool(): Promise<void> {
  const p = pool;
  pool = null;
  if (p) await p.destroy();
}

/** An upload's bytes, lent to the worker for the duration of a task (server/lib/files.ts UploadedFile). */
export interface Upload {
  buffer: Buffer;
  originalname: string;
}

/**
 * Runs a task. The bytes of `lend` travel to the worker by transfer (no 20 MB copy on the event
 * loop) when the Buffer owns its whole ArrayBuffer, and come back the same way; `lend.buffer` then
 * points at them again, whatever the outcome.
 */
async function run<T>(task: Task, lend?: Upload): Promise<T> {
  const buf = lend?.buffer;
  const transferable = !!buf && ownsItsMemory(buf);
  let out: TaskReply;
  const timer = computeDuration.startTimer({ task: task.op });
  try {
    out = (await getPool().run(task, transferable ? { transferList: [buf!.buffer as ArrayBuffer] } : {})) as TaskReply;
    timer({ outcome: out.ok ? 'ok' : 'refused' });
  } catch (e) {
    timer({ outcome: 'error' });
    // The worker died: its bytes are gone with it. The request fails; keep the object usable.
    if (transferable && lend && lend.buffer.byteLength === 0) lend.buffer = Buffer.alloc(0);
    throw e;
  }
  if (transferable && lend && out.bytes)
    lend.buffer = Buffer.from(out.bytes.buffer, out.bytes.byteOffset, out.bytes.byteLength);
  if (out.ok) return out.value as T;
  const e = out.error;
  if (e.name === 'SpectrumError') throw new SpectrumError(e.code as SpectrumErrorCode, e.message, e.details);
  const err = new Error(e.message);
  err.name = e.name;
  if (e.stack) err.stack = e.stack;
  throw err;
}

/** A view of the bytes the worker may receive (a Node Buffer is a Uint8Array). */
const bytesOf = (b: Uint8Array | Buffer): Uint8Array => (b instanceof Uint8Array ? b : new Uint8Array(b));

/** SHA-256 (hex) of raw bytes, off the event loop (copied to the worker). */
export function sha256Off(bytes: Uint8Array): Promise<string> {
  return run<string>({ op: 'sha256', bytes: bytesOf(bytes) });
}

/** readSpectrum off the event loop (the bytes are copied; use for stored files); throws the engine's SpectrumError. */
export function readSpectrumOff(bytes: Uint8Array, fileName: string): Promise<Spectrum> {
  return run<Spectrum>({ op: 'read', bytes: bytesOf(bytes), fileName });
}

/** Reads and scores an upload against prepared references (engine scoreAgainst), with the file's SHA-256. */
export function measureOff(
  file: Upload,
  references: PreparedReference[],
  method: IdentityMethod,
): Promise<MeasureOutput> {
  return run<MeasureOutput>(
    { op: 'measure', bytes: bytesOf(file.buffer), fileName: file.originalname, references, method },
    file,
  );
}

/** Reads an uploaded check spectrum and runs the performance check of its type (engine runPerformanceCheck), with its SHA-256. */
export function instrumentCheckOff(file: Upload, check: PerformanceCheck): Promise<InstrumentCheckOutput> {
  return run<InstrumentCheckOutput>(
    { op: 'instrument-check', bytes: bytesOf(file.buffer), fileName: file.originalname, check },
    file,
  );
}

/** Reads an uploaded reference file, runs the quality gate and picks its bands under a method, with its SHA-256. */
export function referenceOff(file: Upload, method: IdentityMethod): Promise<ReferenceOutput> {
  return run<ReferenceOutput>(
    { op: 'reference', bytes: bytesOf(file.buffer), fileName: file.originalname, method },
    file,
  );
}

/** zxcvbn strength estimate of a password (server/lib/passwords.ts states the threshold). */
export function passwordStrengthOff(password: string, userInputs: string[]): Promise<StrengthOutput> {
  return run<StrengthOutput>({ op: 'password', password, userInputs });
}

/** Counters of the pool, for tests and benchmarks: tasks completed since start, threads running. */
export function computePoolStats(): { completed: number; threads: number } {
  return { completed: pool?.completed ?? 0, threads: pool?.threads.length ?? 0 };
}
