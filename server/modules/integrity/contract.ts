/**
 * Contract of the integrity sweep (docs/compliance.md, "Integrity sweep"): alerts, their QA
 * sign-off and the sweep runs. Pure data and zod only: the client imports this file too.
 */
import { z } from 'zod';
import { signatureInput, type SignatureRecord } from '../../lib/contract';

export const ALERT_KINDS = ['file-hash', 'signature-content', 'certificate-hash', 'role-grant'] as const;
export type AlertKind = (typeof ALERT_KINDS)[number];

export const ALERT_KIND_LABELS: Record<AlertKind, string> = {
  'file-hash': 'Stored file no longer matches its SHA-256',
  'signature-content': 'Signed record no longer matches its signature',
  'certificate-hash': 'Stored certificate no longer matches its SHA-256',
  'role-grant': 'Account roles differ from its latest role grant',
};

export const FOUND_IN = ['sweep', 'download', 'review', 'verification'] as const;
export type FoundIn = (typeof FOUND_IN)[number];

export const signOffSchema = z.object({
  comment: z
    .string()
    .trim()
    .min(10, 'Say what was done about the alert (at least 10 characters), e.g. the deviation number.')
    .max(2000),
  signature: signatureInput,
});
export type SignOffInput = z.input<typeof signOffSchema>;

export const alertListQuery = z.object({ status: z.enum(['open', 'all']).default('open') });

/** A record on which an alert is shown. */
export interface AlertRecord {
  type: string;
  id: string;
  label: string;
  href: string | null;
}

export interface IntegrityAlert {
  id: number;
  kind: AlertKind;
  kindLabel: string;
  subjectType: string;
  subjectId: string;
  expected: string;
  found: string;
  summary: string;
  foundIn: FoundIn;
  foundBy: string | null;
  foundAt: string;
  records: AlertRecord[];
  signOff: { comment: string; signedBy: string; signedAt: string; signature: SignatureRecord | null } | null;
}

export interface IntegrityRun {
  id: number;
  origin: 'schedule' | 'request';
  requestedBy: string | null;
  requestedAt: string;
  status: 'queued' | 'running' | 'finished' | 'failed';
  startedAt: string | null;
  finishedAt: string | null;
  filesTotal: number;
  filesChecked: number;
  signaturesTotal: number;
  signaturesChecked: number;
  certificatesChecked: number;
  accountsChecked: number;
  mismatches: number;
  /** signatures of kinds the sweep cannot recompute, by "record type/meaning" */
  unchecked: Record<string, number>;
  error: string | null;
}

/** What a record's page shows about the integrity of the data it serves. */
export interface RecordIntegrity {
  /** files whose bytes were hashed for this answer, and whether each matched */
  files: { fileId: number; name: string; storedSha256: string; actualSha256: string; matches: boolean }[];
  /** signatures re-checked against the record's current content */
  signatures: { signatureId: number; meaning: string; matches: boolean | null }[];
  /** alerts on this record, open or signed off */
  alerts: IntegrityAlert[];
  /** true when nothing mismatches now and no alert is open */
  intact: boolean;
}
