/**
 * The cross-cutting part of the contract between client and server (DEVELOPERS.md,
 * "Contracts"): free text and dates, roles, e-signature input and record, the audit chain report
 * and the PDF signature check. A contract file imports only zod and other contract files; the
 * client imports it too.
 */
import { z } from 'zod';

// ---- Free text and dates (docs/compliance.md, "Hardened inputs")
/**
 * The one zod helper every free-text field of the API uses, and calendar dates within a sane range.
 *
 * Refused in free text:
 * - C0 control characters (U+0000-U+001F) other than tab and line feed where multi-line text is
 *   allowed (a Windows line end CR LF is first turned into LF), DEL (U+007F) and the C1 controls
 *   (U+0080-U+009F): they are invisible or act on terminals, spreadsheets and logs;
 * - the Unicode bidirectional embeddings, overrides and isolates (U+202A-U+202E, U+2066-U+2069;
 *   the characters of the "Trojan Source" attack, CVE-2021-42574): they make text display in
 *   another order than it is stored, so a reason or a name could read differently on screen, in
 *   the audit trail and on a certificate;
 * - unpaired UTF-16 surrogates (not text at all; MariaDB's utf8mb4 cannot store them).
 */
const CONTROL_SINGLE = /[\u0000-\u001F\u007F-\u009F]/;
const CONTROL_MULTI = /[\u0000-\u0008\u000B-\u001F\u007F-\u009F]/;
const BIDI = /[\u202A-\u202E\u2066-\u2069]/;
const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

function codePoint(ch: string): string {
  return `U+${ch.codePointAt(0)!.toString(16).toUpperCase().padStart(4, '0')}`;
}

/** A sentence saying what is wrong with a piece of free text, or null when it may be stored. */
export function freeTextProblem(v: string, multiLine: boolean): string | null {
  if (LONE_SURROGATE.test(v))
    return 'The text holds a broken character (an unpaired UTF-16 surrogate). Type it again or paste it from another source.';
  const c = (multiLine ? CONTROL_MULTI : CONTROL_SINGLE).exec(v);
  if (c)
    return `The text holds an invisible control character (${codePoint(c[0])}) at position ${c.index + 1}. Remove it: ${
      multiLine
        ? 'only letters, digits, punctuation, spaces, tabs and line breaks are allowed'
        : 'this field takes one line of letters, digits, punctuation and spaces'
    }.`;
  const b = BIDI.exec(v);
  if (b)
    return `The text holds an invisible direction-control character (${codePoint(b[0])}) at position ${b.index + 1}, which can make it display in another order than it is stored. Remove it and type the text again.`;
  return null;
}

function checked<T extends z.ZodString>(s: T, multiLine: boolean): T {
  return s.superRefine((v, ctx) => {
    const p = freeTextProblem(v, multiLine);
    if (p) ctx.addIssue({ code: 'custom', message: p });
  }) as T;
}

/** One line of free text (names, supplier, labels, short notes), trimmed. Chain .min()/.max() as usual. */
export function singleLineText(): z.ZodString {
  return checked(z.string().trim(), false);
}

/** Free text that may span lines (reasons, justifications, notes), trimmed; CR LF becomes LF. */
export function multiLineText(): z.ZodString {
  return checked(
    z
      .string()
      .overwrite((v) => v.replace(/\r\n/g, '\n'))
      .trim(),
    true,
  );
}

/** Earliest date Drumline accepts (a received date, a filter date): no record of Drumline is older. */
export const EARLIEST_DATE = '2000-01-01';
/** Latest date a filter may name (far future; a received date is also checked against the site's today). */
export const LATEST_DATE = '2199-12-31';

/** A calendar date YYYY-MM-DD between `EARLIEST_DATE` and `latest`. */
export function calendarDate(what: string, latest: string = LATEST_DATE) {
  return z
    .string()
    .regex(/^\d{4}-\d{2}-\d{2}$/, `Give the ${what} as YYYY-MM-DD.`)
    .refine(
      (s) => !Number.isNaN(Date.parse(`${s}T00:00:00Z`)) && new Date(`${s}T00:00:00Z`).toISOString().slice(0, 10) === s,
      `The ${what} is not a calendar date.`,
    )
    .refine((s) => s >= EARLIEST_DATE, `The ${what} cannot be before ${EARLIEST_DATE}. Check the year.`)
    .refine((s) => s <= latest, `The ${what} cannot be after ${latest}. Check the year.`);
}

/** An instant (ISO 8601 with a zone) within the sane range, for filters. */
export function instantInRange(message: string) {
  return z.iso.datetime({ offset: true, message }).refine((s) => {
    const t = Date.parse(s);
    return t >= Date.parse(`${EARLIEST_DATE}T00:00:00Z`) && t <= Date.parse(`${LATEST_DATE}T23:59:59Z`);
  }, `Give a time between ${EARLIEST_DATE} and ${LATEST_DATE}.`);
}

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

/**
 * Roles whose grant a second administrator confirms (two-person rule, docs/access.md): QA
 * managers approve references and decide investigations, verifiers sign the second-person
 * review, administrators grant roles.
 */
export const CONFIRMED_ROLES: readonly Role[] = ['qa_manager', 'verifier', 'admin'];

/** A role list in one canonical form (the order of ROLES, no repeats), as stored in the database. */
export function canonicalRoles(roles: readonly Role[]): Role[] {
  return ROLES.filter((r) => roles.includes(r));
}

/** Why a set of roles cannot be held by one account, or null. */
export function roleCombinationProblem(roles: readonly Role[]): string | null {
  if (roles.includes('admin') && roles.length > 1)
    return 'The administrator role cannot be combined with another role: an administrator manages accounts and signs no GMP record. Use a second account for the other work.';
  return null;
}

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
  'role-change-confirmed',
  'integrity-reviewed',
  'source-recorded',
  'source-status-set',
  'material-profile-approved',
  'line-cleared',
  'sampled',
  'check-recorded',
  'released',
  'rejected',
  'retest-started',
  'gate-override-requested',
  'ir-suitability-decided',
  'block-released',
  'audit-trail-reviewed',
  'qualification-approved',
  'back-in-service',
  'impact-assessed',
  'investigation-opened',
  'trend-concluded',
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
  'role-change-confirmed': 'Role change confirmed by a second administrator',
  'integrity-reviewed': 'Integrity alert reviewed by QA',
  'source-recorded': 'Supplier or source recorded by QA',
  'source-status-set': 'Qualification status of a source set by QA',
  'material-profile-approved': 'Material master data approved by QA',
  'line-cleared': 'Line clearance of the sampling area',
  sampled: 'Sampling performed',
  'check-recorded': 'Release check recorded',
  released: 'Released by QA',
  rejected: 'Rejected by QA',
  'retest-started': 'Retest of a released lot started by QA',
  'gate-override-requested': 'Override of the specificity gate requested',
  'ir-suitability-decided': 'Suitability of identity by IR decided',
  'block-released': 'Blocked container released by QA',
  'audit-trail-reviewed': 'Audit trail reviewed for the period',
  'qualification-approved': 'Qualification record approved by QA',
  'back-in-service': 'Instrument put back into service by QA',
  'impact-assessed': 'Impact of a failed instrument check assessed by QA',
  'investigation-opened': 'Investigation of a trend signal opened by QA',
  'trend-concluded': 'Investigation of a trend signal concluded by QA',
};

/** The signature part of a request body: the password again, the user name at first signing. */
export const signatureInput = z.object({
  password: z.string().min(1, 'Enter your password to sign.').max(200),
  username: singleLineText().max(64).optional(),
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
export type ChainReport = (
  | { ok: true; events: number; lastHash: string; lastId: number }
  | { ok: false; events: number; brokenAt: number; problem: string; expected?: string; found?: string }
) &
  ChainContext;

/** Where a chain check started and which checkpoint outside the database it was held against. */
export interface ChainContext {
  /** 'incremental': from the latest checkpoint on; 'full': every event, and every checkpoint compared. */
  mode?: 'incremental' | 'full';
  /** The first event whose content was re-hashed. */
  checkedFrom?: number;
  /** The first event of the keyed chain (HMAC with a key held outside the database). */
  keyedFrom?: number | null;
  checkpoint?: ChainCheckpointInfo | null;
  /** Checkpoint files compared (full check). */
  checkpointsCompared?: number;
}

/** A signed, time-stamped checkpoint of the audit chain, as read back from its file. */
export interface ChainCheckpointInfo {
  eventCount: number;
  headHash: string;
  createdAt: string;
  /** The RFC 3161 time-stamp's time, when it verifies. */
  timeStampedAt: string | null;
  file: string;
}

/** A full chain check running in the background. */
export interface ChainRun {
  id: number;
  status: 'queued' | 'running' | 'finished' | 'failed';
  requestedAt: string;
  startedAt: string | null;
  finishedAt: string | null;
  total: number;
  checked: number;
  result: ChainReport | null;
  error: string | null;
}

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
  /** The RFC 3161 signature time-stamp (PAdES B-T), or null when the signature carries none. */
  timeStamp: TimeStampCheck | null;
  problem?: string;
}

/** What a check of an RFC 3161 time-stamp token found. */
export interface TimeStampCheck {
  present: boolean;
  /** Token signature, TSA certificate (time-stamping usage, trusted root, valid then) and message imprint all verify. */
  valid: boolean;
  /** The time the authority stamped (ISO). */
  time: string | null;
  /** Subject of the authority's certificate. */
  authority: string | null;
  serialNumber: string | null;
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
