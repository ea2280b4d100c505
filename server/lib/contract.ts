/**
 * The cross-cutting part of the contract between client and server (DEVELOPERS.md,
 * "Contracts"): roles, e-signature input and record, the audit chain report and the PDF signature
 * check. A contract file imports only zod and other contract files; the client imports it too.
 */
import { z } from 'zod';

/** The five roles of Drumline. */
export const ROLES = ['operator', 'verifier', 'qa_manager', 'auditor', 'admin'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
  operator: 'Operator',
  verifier: 'Verifier',
  qa_manager: 'QA manager',
  auditor: 'Auditor',
  admin: 'Administrator',
};

/** The meanings an e-signature can carry (21 CFR 11.50). */
export const SIGNATURE_MEANINGS = [
  'performed',
  'verified',
  'returned',
  'approved',
  'approved-with-justification',
  'retired',
  'instrument-check',
  'phase-1-recorded',
  'result-invalidated',
  'failure-confirmed',
  'issued',
] as const;
export type SignatureMeaning = (typeof SIGNATURE_MEANINGS)[number];

/** The meaning of an e-signature in words, wherever a signature is shown on screen. */
export const SIGNATURE_MEANING_LABELS: Record<SignatureMeaning, string> = {
  performed: 'Performed',
  verified: 'Verified',
  returned: 'Returned to the operator',
  approved: 'Approved',
  'approved-with-justification': 'Approved with a written justification',
  retired: 'Retired',
  'instrument-check': 'Instrument check performed',
  'phase-1-recorded': 'Phase I laboratory check recorded',
  'result-invalidated': 'Result invalidated, retest authorised',
  'failure-confirmed': 'Failure confirmed, lot rejected',
  issued: 'Issued',
};

/** The signature part of a request body: the password again, the user name at first signing. */
export const signatureInput = z.object({
  password: z.string().min(1, 'Enter your password to sign.').max(200),
  username: z.string().max(64).optional(),
});
export type SignatureInput = z.infer<typeof signatureInput>;

/** An e-signature as every record that carries one shows it. */
export interface SignatureRecord {
  id: number;
  userId: number;
  printedName: string;
  meaning: string;
  signedAt: string;
  contentHash: string;
  statement: string | null;
}

/** The result of walking the audit hash chain. */
export type ChainReport =
  | { ok: true; events: number; lastHash: string; lastId: number }
  | { ok: false; events: number; brokenAt: number; problem: string; expected?: string; found?: string };

/** What a check of a PDF's digital signature found. */
export interface PdfSignatureCheck {
  /** The file carries a PDF signature (ByteRange + Contents) with a CMS SignedData. */
  signed: boolean;
  /** Digest, signing-certificate-v2 binding and RSA signature all verify, and the whole file is covered. */
  valid: boolean;
  signerSubject: string | null;
  /** SHA-256 of the embedded signer certificate, lower-case hex. */
  fingerprint: string | null;
  subFilter: string | null;
  signingTime: string | null;
  coversWholeFile: boolean;
  hasSigningCertificateV2: boolean;
  problem?: string;
}

/** The site's certificate that signs identity certificates. */
export interface SigningIdentity {
  /** SHA-256 of the DER certificate, lower-case hex. */
  fingerprint: string;
  subject: string;
  issuer: string;
  serialNumber: string;
  notBefore: string;
  notAfter: string;
  source: 'configured' | 'generated';
}

/** An `{ id }` reference with a display name, e.g. who performed a test. */
export interface PersonRef {
  id: number;
  name: string;
}

// ------------------------------------------------------------------ site time
// Times are stored in UTC and shown in the SITE's time zone with the zone named, whatever the
// reader's own zone is: on screen (src/lib/format.ts), in the audit trail report and on the
// identity certificate. One formatter for all three.

/** A valid IANA time zone, or UTC. */
export function validTimeZone(tz: string | null | undefined): string {
  if (!tz) return 'UTC';
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: tz });
    return tz;
  } catch {
    return 'UTC';
  }
}

export type TimeInput = string | number | Date | null | undefined;

export interface SiteTimeOptions {
  /** Show the seconds too (default: hours and minutes). */
  seconds?: boolean;
  /**
   * How the zone is named: 'abbreviation' (default) as "CET", "CEST", "EDT", or the offset
   * ("GMT+5:30") where no abbreviation is known; 'name-and-offset' as "Europe/Berlin (GMT+1)", for
   * a document that must stand on its own for years (the certificate).
   */
  zone?: 'abbreviation' | 'name-and-offset';
}

const formatters = new Map<string, Intl.DateTimeFormat>();
function formatter(key: string, timeZone: string, o: Intl.DateTimeFormatOptions, locale = 'en-GB') {
  const k = `${key}|${timeZone}|${locale}`;
  let f = formatters.get(k);
  if (!f) {
    f = new Intl.DateTimeFormat(locale, { ...o, timeZone });
    formatters.set(k, f);
  }
  return f;
}

function toDate(v: TimeInput): Date | null {
  if (v === null || v === undefined || v === '') return null;
  const d = v instanceof Date ? v : new Date(v);
  return Number.isNaN(d.getTime()) ? null : d;
}

function siteParts(d: Date, timeZone: string, o: SiteTimeOptions): Record<string, string> {
  const byOffset = o.zone === 'name-and-offset';
  const f = formatter(`${o.seconds ? 's' : 'm'}${byOffset ? 'o' : 'a'}`, timeZone, {
    year: 'numeric',
    month: '2-digit',
    day: '2-digit',
    hour: '2-digit',
    minute: '2-digit',
    ...(o.seconds ? { second: '2-digit' } : {}),
    hourCycle: 'h23',
    timeZoneName: byOffset ? 'shortOffset' : 'short',
  });
  const out: Record<string, string> = {};
  for (const p of f.formatToParts(d)) out[p.type] = p.value;
  // Each locale knows the abbreviations of its own region (en-GB: CET, CEST, BST; en-US: EST,
  // PDT); where en-GB has only an offset ("GMT-5"), ask en-US, else keep the offset.
  if (!byOffset && /^GMT[+-]/.test(out.timeZoneName ?? '')) {
    const us = formatter('zone-us', timeZone, { timeZoneName: 'short' }, 'en-US')
      .formatToParts(d)
      .find((p) => p.type === 'timeZoneName')?.value;
    if (us && !/^GMT[+-]/.test(us)) out.timeZoneName = us;
  }
  return out;
}

/** "2026-03-14 09:42 CET" (ISO-like order, 24-hour clock, zone named) in `timeZone`; "—" for no time. */
export function formatSiteTime(v: TimeInput, timeZone: string, o: SiteTimeOptions = {}): string {
  const d = toDate(v);
  if (!d) return '—';
  const p = siteParts(d, timeZone, o);
  const time = `${p.hour}:${p.minute}${o.seconds ? `:${p.second}` : ''}`;
  const zone = o.zone === 'name-and-offset' ? `${timeZone} (${p.timeZoneName})` : p.timeZoneName;
  return `${p.year}-${p.month}-${p.day} ${time} ${zone}`;
}

/** "2026-03-14": the calendar day at the site of an instant; "—" for no time. */
export function formatSiteDate(v: TimeInput, timeZone: string): string {
  const d = toDate(v);
  if (!d) return '—';
  const p = siteParts(d, timeZone, {});
  return `${p.year}-${p.month}-${p.day}`;
}
