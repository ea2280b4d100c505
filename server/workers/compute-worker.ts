/**
 * The worker thread of the compute pool (server/workers/pool.ts): everything that would hold the
 * event loop for long with a big upload runs here - reading a spectrum file, scoring it, the
 * polystyrene check, picking a reference's bands, SHA-256 of the raw bytes - and the password
 * strength estimate (its dictionaries are large). Pure functions of the task; no database, no I/O.
 * A SpectrumError travels back as data (structured clone keeps only an Error's message).
 */
import { createHash } from 'node:crypto';
import { Piscina } from 'piscina';
import { ZxcvbnFactory } from '@zxcvbn-ts/core';
import * as zxcvbnCommon from '@zxcvbn-ts/language-common';
import * as zxcvbnEn from '@zxcvbn-ts/language-en';
import {
  checkPolystyrene,
  checkQuality,
  prepare,
  readSpectrum,
  scoreAgainst,
  type Spectrum,
  SpectrumError,
} from '../spectra';
import { pickBands } from '../modules/library/engine';
import { provenanceKeys } from '../modules/provenance/keys';
import type { Task, TaskResult, WorkerError } from './tasks';

function sha256(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex');
}

let zxcvbn: ZxcvbnFactory | null = null;
function strength() {
  zxcvbn ??= new ZxcvbnFactory({
    dictionary: { ...zxcvbnCommon.dictionary, ...zxcvbnEn.dictionary },
    graphs: zxcvbnCommon.adjacencyGraphs,
    translations: zxcvbnEn.translations,
  });
  return zxcvbn;
}

function asWorkerError(e: unknown): WorkerError {
  if (e instanceof SpectrumError || (e as { name?: string })?.name === 'SpectrumError') {
    const se = e as SpectrumError;
    return { name: 'SpectrumError', code: se.code, message: se.message, details: se.details ?? null };
  }
  const err = e as Error;
  return { name: err?.name ?? 'Error', message: err?.message ?? String(e), stack: err?.stack };
}

/**
 * Returns the result with the given buffers moved (not copied) to the main thread: the spectrum's
 * arrays and the upload's bytes, which the main thread lent to this task by transfer.
 */
function moved(value: unknown, buffers: (ArrayBufferLike | undefined)[]) {
  const list = [...new Set(buffers.filter((b): b is ArrayBuffer => b instanceof ArrayBuffer && b.byteLength > 0))];
  if (list.length === 0) return value;
  const transferable = { [Piscina.transferableSymbol]: list, [Piscina.valueSymbol]: value };
  return Piscina.move(transferable as unknown as Parameters<typeof Piscina.move>[0]);
}

function run(task: Task): TaskResult {
  switch (task.op) {
    case 'sha256':
      return { ok: true, value: sha256(task.bytes) };
    case 'read':
      return { ok: true, value: readSpectrum(task.bytes, task.fileName) };
    case 'measure': {
      const spectrum = readSpectrum(task.bytes, task.fileName);
      const result = scoreAgainst(spectrum, task.references, task.method);
      // the sample goes back for the copy check (server/modules/provenance) and the mix-up hint
      return {
        ok: true,
        value: {
          meta: spectrum.meta,
          spectrum,
          result,
          sha256: sha256(task.bytes),
          keys: provenanceKeys(spectrum),
        },
      };
    }
    case 'instrument-check': {
      const spectrum = readSpectrum(task.bytes, task.fileName);
      return {
        ok: true,
        value: {
          result: checkPolystyrene(spectrum, task.options),
          sha256: sha256(task.bytes),
          spectrum,
          keys: provenanceKeys(spectrum),
        },
      };
    }
    case 'reference': {
      const spectrum = readSpectrum(task.bytes, task.fileName);
      const quality = checkQuality(spectrum, task.method);
      if (!quality.ok)
        return {
          ok: true,
          value: { spectrum, quality, bands: [], sha256: sha256(task.bytes), keys: provenanceKeys(spectrum) },
        };
      prepare(spectrum, task.method); // refuses a spectrum that does not cover the method range
      return {
        ok: true,
        value: {
          spectrum,
          quality,
          bands: pickBands(spectrum, task.method),
          sha256: sha256(task.bytes),
          keys: provenanceKeys(spectrum),
        },
      };
    }
    case 'password': {
      const r = strength().check(task.password, task.userInputs);
      return {
        ok: true,
        value: {
          score: r.score,
          guessesLog10: r.guessesLog10,
          warning: r.feedback.warning,
          suggestions: r.feedback.suggestions,
        },
      };
    }
  }
}

export default function computeTask(task: Task) {
  const lent = 'bytes' in task ? task.bytes : undefined;
  let out: TaskResult;
  try {
    out = run(task);
  } catch (e) {
    out = { ok: false, error: asWorkerError(e) };
  }
  const value = out.ok ? (out.value as { spectrum?: Spectrum | null; x?: unknown } | null) : null;
  const spectrum = task.op === 'read' ? (value as Spectrum | null) : (value?.spectrum ?? null);
  return moved({ ...out, bytes: lent }, [lent?.buffer, spectrum?.x.buffer, spectrum?.y.buffer]);
}
