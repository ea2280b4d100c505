/** Contract of the export-folder intake (docs/instrument-intake.md). */
import { z } from 'zod';
import { multiLineText, singleLineText } from '../../lib/contract';

export const intakeSettingSchema = z
  .object({
    /** a folder inside the site's export root (INSTRUMENT_EXPORT_ROOT), e.g. "ftir-2"; null: no folder */
    exportFolder: singleLineText().min(1).max(200).nullable(),
    /** poll the folder instead of waiting for file-system events (mounted shares) */
    usePolling: z.boolean(),
    manualUploadAllowed: z.boolean(),
    /** IANA zone of the instrument's clock, e.g. Europe/Berlin */
    timeZone: singleLineText().min(1).max(64),
    reason: multiLineText().min(5, 'Say why the settings change (at least 5 characters).').max(1000),
  })
  .strict();
export type IntakeSettingInput = z.infer<typeof intakeSettingSchema>;

export const assignAcquisitionSchema = z
  .object({
    containerId: z.number().int().positive(),
    /** the operator confirms that this acquisition is this container's spectrum */
    confirm: z.literal(true, { message: 'Confirm that this acquisition is the spectrum of the chosen container.' }),
    /** why a container with a valid result is measured again */
    reason: multiLineText().max(1000).optional(),
    confirmIdentifiers: z.boolean().optional(),
  })
  .strict();
export type AssignAcquisitionInput = z.infer<typeof assignAcquisitionSchema>;

export const notASampleSchema = z
  .object({
    reason: multiLineText().min(10, 'Say what the file is, if not a sample (at least 10 characters).').max(1000),
  })
  .strict();
export type NotASampleInput = z.infer<typeof notASampleSchema>;

export const acquisitionListQuery = z.object({ state: z.enum(['unassigned', 'all']).optional() }).strict();

export const ACQUISITION_STATES = ['received', 'attached', 'unassigned', 'assigned', 'not-a-sample'] as const;
export type AcquisitionState = (typeof ACQUISITION_STATES)[number];

export const ACQUISITION_STATE_LABELS: Record<AcquisitionState, string> = {
  received: 'Received, being read',
  attached: 'Attached to its container',
  unassigned: 'Unassigned',
  assigned: 'Assigned by an operator',
  'not-a-sample': 'Not a sample',
};

/** The provenance line of a measurement whose file came from an export folder. */
export const FROM_EXPORT_FOLDER = "received from the instrument's export folder";

export interface IntakeSetting {
  instrumentId: number;
  exportFolder: string | null;
  usePolling: boolean;
  manualUploadAllowed: boolean;
  timeZone: string;
  setBy: string | null;
  setAt: string | null;
  reason: string | null;
}

export interface IntakeSettingView {
  current: IntakeSetting;
  history: IntakeSetting[];
  /** the watched folder as the server resolves it, for the lab's instructions */
  exportRoot: string;
}

export interface AcquisitionEntry {
  id: number;
  instrumentId: number;
  instrumentName: string;
  fileName: string;
  sha256: string;
  size: number;
  receivedAt: string;
  acquiredText: string | null;
  acquiredAt: string | null;
  /** receipt minus stated acquisition time, in seconds (null: the file states no time) */
  clockOffsetSeconds: number | null;
  clockWarning: string | null;
  labelFound: string | null;
  sampleText: string | null;
  readError: string | null;
  state: AcquisitionState;
  /** why it is unassigned (code and sentence), or the reason given for "not a sample" */
  stateCode: string | null;
  stateReason: string | null;
  decidedBy: string | null;
  decidedAt: string | null;
  measurementId: number | null;
  testId: number | null;
  containerLabel: string | null;
}

export interface TestAcquisitionsView {
  testId: number;
  instrumentId: number | null;
  instrumentName: string | null;
  from: string;
  /** the end of the window: the test's performed signature, else now */
  to: string;
  /** every acquisition received from the instrument's folder in the window, assigned or not */
  acquisitions: AcquisitionEntry[];
  /** measurements of the test uploaded by hand (not from the folder) */
  manualUploads: { measurementId: number; label: string; fileName: string; uploadedAt: string; uploadedBy: string }[];
}

export interface OverdueAcquisitions {
  hours: number;
  acquisitions: AcquisitionEntry[];
}
