/** Input schemas of identity testing and verification (zod). The client imports this file too. */
import { z } from 'zod';
import { signatureFields as signatureInput } from '../lots/schemas';

export const startTestSchema = z.object({
  instrumentId: z.number().int().positive('Choose an instrument.'),
});

export const switchInstrumentSchema = startTestSchema;

/** Multi-file upload, step 1: match file names to containers (stores nothing). */
export const matchFilesSchema = z.object({
  fileNames: z.array(z.string().min(1).max(255)).min(1, 'Choose at least one file.').max(999),
});

/** Multipart fields of a measurement upload besides the file: which container (id or scanned label). */
export const measurementFieldsSchema = z
  .object({
    containerId: z.coerce.number().int().positive().optional(),
    label: z.string().trim().max(60).optional(),
  })
  .refine((v) => v.containerId !== undefined || (v.label ?? '') !== '', {
    message: 'Say which container this spectrum belongs to (container or label).',
  });

export const performSchema = z.object({ signature: signatureInput });

export const verifySchema = z.object({
  signature: signatureInput,
  comment: z.string().trim().max(2000).optional(),
});

export const returnSchema = z.object({
  reason: z.string().trim().min(10, 'Say why the test goes back (at least 10 characters).').max(2000),
  signature: signatureInput,
});

export const TEST_STATUS_LABELS = {
  'in-progress': 'In progress',
  'awaiting-verification': 'Awaiting verification',
  verified: 'Verified',
  returned: 'Returned to the operator',
} as const;

export type MatchStatus =
  | 'matched'
  | 'no-label'
  | 'several-labels'
  | 'unknown-label'
  | 'other-lot'
  | 'not-in-scope'
  | 'duplicate'
  | 'failed-needs-qa';

export const MATCH_STATUS_TEXT: Record<MatchStatus, string> = {
  matched: 'Ready',
  'no-label': 'No container label in the file name',
  'several-labels': 'The file name holds more than one container label',
  'unknown-label': 'No container has this label',
  'other-lot': 'The label belongs to another lot',
  'not-in-scope': 'This container is not part of this test attempt',
  duplicate: 'Another chosen file names the same container',
  'failed-needs-qa': 'This container failed; a retest needs QA authorisation through an investigation',
};
