/**
 * The periodic audit-trail review (EU GMP Annex 11 §9; docs/trending.md): exception lists of a
 * period drawn from the audit trail, QA's signed review record (append-only table audit_review,
 * e-signature meaning "audit-trail-reviewed" over the stored content, recipe in
 * server/signature-recipes.ts), the list, the PDF and whether a review is due (site
 * setting AUDIT_REVIEW_MONTHS, default monthly), and the reminder job that mails QA once per due
 * period (table audit_review_reminder, lease `audit-review-reminder`).
 */
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import { formatSiteTime } from '../../lib/contract';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { notFound, unprocessable } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { must, parseJson } from '../../lib/db';
import type { AuditReviewRow } from '../../lib/db-tables';
import { startJob, type RunningJob } from '../../lib/lease';
import { emailsOfRole, enqueueMail } from '../../lib/mail';
import { renderPdf } from '../../lib/pdf';
import { transactionWithRetry } from '../../lib/retry';
import { pageLink } from '../../lib/links';
import { insertWithNextNumber, yearOf } from '../../lib/numbering';
import {
  REVIEW_CATEGORIES,
  REVIEW_CATEGORY_LABELS,
  type AuditReview,
  type ExceptionEvent,
  type ExceptionLists,
  type ReviewCategory,
  type ReviewDue,
  type ReviewInput,
} from './contract';

/** Events listed per exception list (the count is always complete). */
export const EVENT_CAP = 200;

/** Which audit actions make up each exception list. */
export const CATEGORY_ACTIONS: Record<ReviewCategory, string[]> = {
  'failed-sign-ins': ['auth.sign-in-failed', 'auth.sign-in-refused-locked', 'auth.locked'],
  'failed-signatures': ['signature.refused'],
  'role-changes': [
    'user.created',
    'user.role-change-requested',
    'user.roles-changed',
    'user.role-change-declined',
    'user.role-change-withdrawn',
    'user.unlocked',
    'user.password-reset',
  ],
  'invalidated-results': ['investigation.result-invalidated', 'lot.retest-authorised'],
  'gate-overrides': [
    'reference.approval-blocked',
    'reference.approved-with-justification',
    'method.approval-blocked',
    'gate-override.requested',
    'gate-override.confirmed',
  ],
  'integrity-alerts': ['integrity.mismatch-found', 'integrity.alert-signed-off'],
  'trend-signals': ['trend.signal-raised', 'trend.signal-acknowledged', 'trend.signal-investigated'],
};

/** Actions that are not GMP-relevant changes (sessions and reading): left out of the period total. */
const NOT_COUNTED = ['auth.signed-in', 'auth.signed-out', 'audit.exported', 'certificate.downloaded'];

const bounds = (from: string, to: string): [Date, Date] => [
  new Date(`${from}T00:00:00.000Z`),
  new Date(new Date(`${to}T00:00:00.000Z`).getTime() + 86_400_000),
];

const today = () => new Date().toISOString().slice(0, 10);

export async function exceptionLists(db: Knex, from: string, to: string): Promise<ExceptionLists> {
  const [a, b] = bounds(from, to);
  const inPeriod = () => db('audit_event').where('occurred_at', '>=', a).andWhere('occurred_at', '<', b);
  const total = await inPeriod().whereNotIn('action', NOT_COUNTED).count<{ n: number }[]>({ n: '*' });
  const lists = [];
  for (const key of REVIEW_CATEGORIES) {
    const actions = CATEGORY_ACTIONS[key];
    const q = () => {
      const base = inPeriod().whereIn('action', actions);
      // an approval over the specificity gate is a signature with that meaning
      if (key === 'gate-overrides')
        base.orWhere((w) =>
          w
            .where('occurred_at', '>=', a)
            .andWhere('occurred_at', '<', b)
            .andWhere('action', 'signature.signed')
            .andWhere('after_json', 'like', '%"approved-with-justification"%'),
        );
      return base;
    };
    const [{ n }] = await q().count<{ n: number }[]>({ n: '*' });
    const rows = await q().orderBy('id', 'desc').limit(EVENT_CAP);
    lists.push({
      key,
      label: REVIEW_CATEGORY_LABELS[key],
      count: Number(n),
      events: rows.map((r): ExceptionEvent => ({
        id: Number(r.id),
        occurredAt: new Date(r.occurred_at).toISOString(),
        actorName: r.actor_name,
        action: r.action,
        entity: r.entity_id ? `${r.entity_type} ${r.entity_id}` : r.entity_type,
        reason: r.reason,
      })),
    });
  }
  return { from, to, totalEvents: Number(total[0].n), lists };
}

/** A review with its reviewer's name (the join of reviewQuery). */
type ReviewWithReviewer = AuditReviewRow & { full_name: string };

const dateOnly = (d: Date | string) => (typeof d === 'string' ? d.slice(0, 10) : d.toISOString().slice(0, 10));

/** What the reviewer signs, rebuilt the same way from the stored row (integrity recipe). */
export function reviewSignedContent(r: AuditReviewRow) {
  return {
    review: r.number,
    from: dateOnly(r.period_from),
    to: dateOnly(r.period_to),
    scope: parseJson<string[]>(r.scope, []),
    exceptions: parseJson<unknown>(r.exceptions, null),
    findings: r.findings,
    actions: r.actions,
  };
}

async function toReview(db: Knex, r: ReviewWithReviewer): Promise<AuditReview> {
  return {
    id: r.id,
    number: r.number,
    from: dateOnly(r.period_from),
    to: dateOnly(r.period_to),
    scope: parseJson<ReviewCategory[]>(r.scope, []),
    exceptions: parseJson<AuditReview['exceptions']>(r.exceptions, { totalEvents: 0, lists: [] }),
    findings: r.findings,
    actions: r.actions,
    reviewedBy: { id: r.reviewed_by, name: r.full_name ?? '' },
    reviewedAt: new Date(r.reviewed_at).toISOString(),
    signatures: await signaturesFor(db, 'audit_review', r.id),
  };
}

const reviewQuery = (db: Knex) =>
  db('audit_review as r')
    .join('app_user as u', 'u.id', 'r.reviewed_by')
    .select<ReviewWithReviewer[]>('r.*', 'u.full_name');

export async function listReviews(db: Knex): Promise<AuditReview[]> {
  const rows = await reviewQuery(db).orderBy('r.period_to', 'desc').orderBy('r.id', 'desc').limit(500);
  return Promise.all(rows.map((r) => toReview(db, r)));
}

export async function getReview(db: Knex, id: number): Promise<AuditReview> {
  const r = await reviewQuery(db).where('r.id', id).first();
  if (!r) throw notFound('The audit-trail review');
  return toReview(db, r);
}

export async function recordReview(
  db: Knex,
  user: AuthUser,
  input: ReviewInput,
  ip: string | null,
): Promise<AuditReview> {
  if (input.to >= today())
    throw unprocessable(
      'PERIOD_NOT_OVER',
      `A review covers a period that is over: the last day can be yesterday at the latest, not ${input.to}.`,
    );
  const lists = await exceptionLists(db, input.from, input.to);
  const scope = REVIEW_CATEGORIES.filter((c) => input.scope.includes(c));
  const snapshot = {
    totalEvents: lists.totalEvents,
    lists: lists.lists
      .filter((l) => scope.includes(l.key))
      .map((l) => ({ key: l.key, label: l.label, count: l.count, eventIds: l.events.map((e) => e.id) })),
  };
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'audit-trail-reviewed',
    entityType: 'audit_review',
    entityId: 'new',
    ip,
  });
  const id = await transactionWithRetry(db, async (trx) => {
    const now = new Date();
    const created = await insertWithNextNumber(trx, {
      table: 'audit_review',
      column: 'number',
      prefix: `ATR-${yearOf(now)}-`,
      width: 3,
      row: (number) => ({
        number,
        period_from: input.from,
        period_to: input.to,
        scope: JSON.stringify(scope),
        exceptions: JSON.stringify(snapshot),
        findings: input.findings,
        actions: input.actions,
        reviewed_by: user.id,
        reviewed_at: now,
      }),
    });
    const inserted = await trx('audit_review').where({ id: created.id }).first();
    const row = must(inserted, `Audit-trail review ${created.id}, inserted in this transaction,`);
    await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'audit-trail-reviewed',
      entityType: 'audit_review',
      entityId: created.id,
      content: reviewSignedContent(row),
      statement: input.findings,
      ip,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'audit.reviewed',
      entityType: 'audit_review',
      entityId: created.id,
      after: {
        number: created.number,
        from: input.from,
        to: input.to,
        scope,
        counts: Object.fromEntries(snapshot.lists.map((l) => [l.key, l.count])),
      },
      reason: input.findings,
      ip,
    });
    return created.id;
  });
  return getReview(db, id);
}

function addMonths(day: string, months: number): string {
  const d = new Date(`${day}T00:00:00.000Z`);
  d.setUTCMonth(d.getUTCMonth() + months);
  return d.toISOString().slice(0, 10);
}

/** Due when no review exists, or `months` after the day after the last reviewed period. */
export async function reviewDue(db: Knex, months: number, on = today()): Promise<ReviewDue> {
  const last = await db('audit_review')
    .orderBy('period_to', 'desc')
    .orderBy('id', 'desc')
    .first('id', 'number', 'period_to');
  if (!last)
    return {
      due: true,
      intervalMonths: months,
      lastReview: null,
      dueFrom: null,
      text: 'Audit-trail review due: none is on record. Review the audit trail and record the signed review.',
    };
  const to = dateOnly(last.period_to);
  const next = new Date(`${to}T00:00:00.000Z`);
  next.setUTCDate(next.getUTCDate() + 1);
  const dueFrom = addMonths(next.toISOString().slice(0, 10), months);
  const due = on >= dueFrom;
  return {
    due,
    intervalMonths: months,
    lastReview: { id: last.id, number: last.number, to },
    dueFrom,
    text: due
      ? `Audit-trail review due: the review after ${last.number} (period ending ${to}) is due since ${dueFrom}.`
      : `The next audit-trail review is due on ${dueFrom}.`,
  };
}

export async function reviewPdf(
  db: Knex,
  id: number,
  site: { siteName: string; timeZone: string },
): Promise<{ fileName: string; pdf: Buffer }> {
  const r = await getReview(db, id);
  const zone = site.timeZone;
  const sig = r.signatures.find((s) => s.meaning === 'audit-trail-reviewed');
  const pdf = await renderPdf({
    pageSize: 'A4',
    pageMargins: [40, 40, 40, 40],
    info: { title: `Audit-trail review ${r.number}`, author: 'Drumline' },
    defaultStyle: { fontSize: 9 },
    styles: { title: { fontSize: 15, bold: true }, h: { fontSize: 11, bold: true, margin: [0, 10, 0, 4] } },
    content: [
      { text: `Audit-trail review ${r.number}`, style: 'title' },
      { text: site.siteName },
      {
        margin: [0, 8, 0, 0],
        layout: 'noBorders',
        table: {
          widths: [120, '*'],
          body: [
            ['Period', `${r.from} to ${r.to} (UTC days)`],
            ['GMP-relevant events', String(r.exceptions.totalEvents)],
            ['Reviewed by', r.reviewedBy.name],
            [
              'E-signature',
              sig
                ? `${sig.printedName}, ${formatSiteTime(sig.signedAt, zone, { seconds: true })}, meaning: audit trail reviewed for the period; content SHA-256 ${sig.contentHash}`
                : 'missing',
            ],
          ],
        },
      },
      { text: 'Exception lists reviewed', style: 'h' },
      {
        layout: 'lightHorizontalLines',
        table: {
          headerRows: 1,
          widths: ['*', 60, 170],
          body: [
            ['List', 'Events', 'Audit event numbers (newest first)'],
            ...r.exceptions.lists.map((l) => [
              l.label,
              String(l.count),
              l.eventIds.slice(0, 40).join(', ') + (l.eventIds.length > 40 ? ' …' : ''),
            ]),
          ],
        },
      },
      { text: 'Findings', style: 'h' },
      { text: r.findings },
      { text: 'Actions', style: 'h' },
      { text: r.actions },
    ],
    footer: (page: number, pages: number) => ({
      margin: [40, 8, 40, 0],
      columns: [
        { text: `Drumline audit-trail review ${r.number} · ${site.siteName}`, fontSize: 7 },
        { text: `Page ${page} of ${pages}`, alignment: 'right', fontSize: 8, width: 90 },
      ],
    }),
  });
  return { fileName: `${r.number}.pdf`, pdf };
}

/** The key of a due period: the day the review fell due, or none on record. */
const NONE_ON_RECORD = 'none-on-record';

/**
 * Mails QA that the periodic audit-trail review is due, once per due period: the reminder row
 * (unique per due day) and the mail are written in one short transaction, so a second run, on this
 * or another app server, finds the row and mails nothing. Returns whether it mailed.
 */
export async function remindIfDue(
  db: Knex,
  months: number,
  on = today(),
): Promise<{ due: boolean; mailed: boolean; dueKey: string | null }> {
  const d = await reviewDue(db, months, on);
  if (!d.due) return { due: false, mailed: false, dueKey: null };
  const dueKey = d.dueFrom ?? NONE_ON_RECORD;
  const mailed = await transactionWithRetry(db, async (trx) => {
    const to = await emailsOfRole(trx, 'qa_manager');
    // nobody to tell yet: no row, so the next run tries again
    if (to.length === 0) return false;
    const [id] = await trx('audit_review_reminder')
      .insert({
        due_key: dueKey,
        after_review_id: d.lastReview?.id ?? null,
        interval_months: months,
        recipients: to.length,
        mailed_at: new Date(),
      })
      .onConflict()
      .ignore();
    if (!id) return false;
    await enqueueMail(trx, {
      to,
      subject: d.lastReview
        ? `Audit-trail review due since ${d.dueFrom} (last: ${d.lastReview.number})`
        : 'Audit-trail review due: none on record',
      text: [
        d.text,
        `The site reviews its audit trail every ${months} month${months === 1 ? '' : 's'} (EU GMP Annex 11 §9: audit trails are reviewed regularly).`,
        `Choose the period, read its exception lists, record findings and actions and sign: ${pageLink('/audit-reviews')}`,
      ].join('\n'),
    });
    return true;
  });
  return { due: true, mailed, dueKey };
}

let reminderJob: RunningJob | null = null;
/** The reminder job: once per site under a lease (server/lib/lease.ts), hourly. */
export function startAuditReviewReminderJob(db: Knex, months: number, intervalMs = 60 * 60_000): RunningJob {
  reminderJob ??= startJob(db, {
    name: 'audit-review-reminder',
    intervalMs,
    run: (d) => remindIfDue(d, months),
  });
  return reminderJob;
}
export async function stopAuditReviewReminderJob(): Promise<void> {
  await reminderJob?.stop();
  reminderJob = null;
}
