/** Contract of provenance (docs/provenance.md): hand-over of an attempt, blocked containers. */
import { z } from 'zod';
import { multiLineText, signatureInput } from '../../lib/contract';

export const handOverSchema = z.object({
  toUserId: z.number().int().positive(),
  reason: multiLineText().min(5, 'Say why the attempt is handed over (at least 5 characters).').max(1000),
});
export type HandOverInput = z.infer<typeof handOverSchema>;

export const releaseBlockSchema = z.object({
  reason: multiLineText().min(20, 'Write how the lab goes on and why (at least 20 characters).').max(4000),
  signature: signatureInput,
});
export type ReleaseBlockInput = z.infer<typeof releaseBlockSchema>;

export interface OperatorChoice {
  id: number;
  name: string;
}

export interface BlockedContainer {
  blockId: number;
  containerId: number;
  label: string;
  lotId: number;
  lotNumber: string;
  testId: number;
  invalidCount: number;
  blockedAt: string;
}

/** What the verifier sees of a measurement's provenance. */
export interface MeasurementProvenance {
  acquiredText: string | null;
  acquiredAt: string | null;
  /** consistent, not-stated, unreadable */
  acquiredJudgement: string;
  instrumentText: string | null;
  statedSerial: string | null;
  /** matches, not-stated, no-serial-registered */
  serialJudgement: string;
  title: string | null;
  sampleText: string | null;
  identifierFindings: { text: string; kind: string; belongsTo: string }[];
  identifiersConfirmed: boolean;
  remeasureReason: string | null;
  remeasureOf: number | null;
  /** where the file came from (docs/instrument-intake.md) */
  source: 'manual-upload' | 'export-folder';
  /** e.g. "received from the instrument's export folder (FTIR-1, received ...)" */
  sourceText: string;
  acquisitionId: number | null;
  /** receipt minus the file's stated acquisition time (export folder only) */
  clockOffsetSeconds: number | null;
  /** set when the offset exceeds the site's clock tolerance */
  clockWarning: string | null;
}

export const NOT_STATED = 'not stated in the file';

/** One measurement of an attempt as the verifier's review lists it (every one, in order). */
export interface ReviewMeasurementEntry {
  id: number;
  containerId: number;
  label: string;
  verdict: 'pass' | 'fail' | 'invalid';
  matchScore: number | null;
  /** current: the container's latest measurement in the attempt; superseded: a later one replaced it */
  state: 'current' | 'superseded';
  measuredBy: string;
  measuredAt: string;
  file: { name: string; sha256: string };
  provenance: MeasurementProvenance;
}
