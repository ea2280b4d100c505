/**
 * Rules of the audit trail browser: who sees which events, paging, record history, and the
 * exports (CSV streamed page by page with back-pressure, PDF report capped). Every export is
 * itself an audit event ('audit.exported', with the filter) written before any data leaves.
 */
import { childLog, safeError } from '../../lib/log';
import type { Response } from 'express';
import type { Knex } from 'knex';
import { auditNow, type Actor, type AuditRow } from '../../lib/audit';
import { forbidden, notFound, badRequest } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { signaturesFor } from '../../lib/esign';
import * as repo from './repo';
import { CSV_COLUMNS, csvLine, eventCsvLine } from './csv';
import { renderAuditPdf } from './pdf';
import { namesFor } from './names';
import { formatSiteTime, validTimeZone } from '../../lib/contract';
import {
  COUNT_CAP,
  HISTORY_CAP,
  PDF_ROW_CAP,
  type AuditEventDetail,
  type AuditFacets,
  type AuditFilter,
  type AuditListQuery,
  type AuditPage,
  type RecordHistory,
  refKey,
} from './contract';

/** Full trail for auditors and QA; account and sign-in events only for administrators. */
export function scopeFor(user: AuthUser): repo.Scope {
  if (user.roles.includes('auditor') || user.roles.includes('qa_manager')) return 'all';
  if (user.roles.includes('admin')) return 'accounts';
  throw forbidden('Reading the audit trail needs the role auditor, qa_manager or admin.');
}

function checkRange(f: Partial<AuditFilter>): void {
  if (f.from && f.to && new Date(f.from).getTime() >= new Date(f.to).getTime())
    throw badRequest('The start of the date range must lie before its end.');
}

export async function listEvents(db: Knex, user: AuthUser, q: AuditListQuery): Promise<AuditPage> {
  const scope = scopeFor(user);
  checkRange(q);
  let cursor: repo.Cursor | null = null;
  if (q.cursor) {
    cursor = repo.decodeCursor(q.cursor);
    if (!cursor) throw badRequest('The page cursor is not valid; start again from the first page.');
  }
  const { rows, nextCursor, search } = await repo.listPage(db, q, { scope }, { sort: q.sort, cursor, limit: q.limit });
  // Counted on the first page only, capped; a text search is not counted (it reads window by window).
  const total = cursor || q.q ? null : await repo.countCapped(db, q, { scope }, COUNT_CAP);
  return {
    events: rows,
    nextCursor: nextCursor ? repo.encodeCursor(nextCursor) : null,
    total,
    limit: q.limit,
    scope,
    ...(search ? { search } : {}),
  };
}

export async function getEvent(db: Knex, user: AuthUser, id: number): Promise<AuditEventDetail> {
  const scope = scopeFor(user);
  const row = await repo.findEvent(db, id);
  if (!row || (scope === 'accounts' && row.entity_type !== 'user')) throw notFound(`Audit event ${id}`);
  return repo.toDetail(row, await namesFor(db, [row]));
}

export async function getFacets(db: Knex, user: AuthUser): Promise<AuditFacets> {
  const scope = scopeFor(user);
  const f = await repo.facets(db);
  if (scope === 'all') return f;
  return {
    actions: f.actions.filter((a) => a.startsWith('auth.') || a.startsWith('user.')),
    entityTypes: ['user'],
    actors: f.actors,
  };
}

/**
 * Who may read a record's history: auditors and QA everything; operators and verifiers the GMP
 * records they work with (not accounts); administrators account records only.
 */
export function mayReadHistory(user: AuthUser, entityType: string): boolean {
  const r = user.roles;
  if (r.includes('auditor') || r.includes('qa_manager')) return true;
  if (entityType === 'user') return r.includes('admin');
  return r.includes('operator') || r.includes('verifier');
}

export async function recordHistory(
  db: Knex,
  user: AuthUser,
  entityType: string,
  entityId: string,
): Promise<RecordHistory> {
  if (!mayReadHistory(user, entityType))
    throw forbidden(`Your role does not allow reading the history of ${entityType} records.`);
  const rows = await repo.eventsOfRecord(db, entityType, entityId, HISTORY_CAP);
  const truncated = rows.length > HISTORY_CAP;
  const signatures = await signaturesFor(db, entityType, entityId);
  const kept = rows.slice(0, HISTORY_CAP);
  const names = await namesFor(db, [
    { entity_type: entityType, entity_id: entityId, actor_id: null, before_json: null, after_json: null },
    ...kept,
  ]);
  return {
    entityType,
    entityId,
    recordNumber: names[refKey(entityType, entityId)] ?? null,
    events: kept.map((r) => repo.toDetail(r, names)),
    signatures,
    truncated,
  };
}

// ---------------------------------------------------------------------------------------------
// Exports

export interface ExportContext {
  user: AuthUser;
  actor: Actor;
  ip: string | null;
  siteName: string;
  siteTimeZone: string;
}

/** The filter in words, for the export header and the report. */
export async function describeFilter(
  db: Knex,
  f: Partial<AuditFilter>,
  scope: repo.Scope,
  tz: string,
): Promise<string[]> {
  const parts: string[] = [];
  if (scope === 'accounts') parts.push('account and sign-in events only (administrator view)');
  if (f.from) parts.push(`from ${formatSiteTime(f.from, tz, { seconds: true })} (${new Date(f.from).toISOString()})`);
  if (f.to) parts.push(`before ${formatSiteTime(f.to, tz, { seconds: true })} (${new Date(f.to).toISOString()})`);
  if (f.actorId !== undefined) {
    const u = await db('app_user').where({ id: f.actorId }).first();
    parts.push(`user ${u ? `${u.full_name} (${u.username}, id ${f.actorId})` : `id ${f.actorId}`}`);
  }
  let recordName: string | undefined;
  if (f.entityType && f.entityId) {
    const names = await namesFor(db, [
      { entity_type: f.entityType, entity_id: f.entityId, actor_id: null, before_json: null, after_json: null },
    ]);
    recordName = names[refKey(f.entityType, f.entityId)];
  }
  if (f.action)
    parts.push(f.action.endsWith('*') ? `action starting with "${f.action.slice(0, -1)}"` : `action "${f.action}"`);
  if (f.entityType) parts.push(`record type "${f.entityType}"`);
  if (f.entityId) parts.push(`record id "${f.entityId}"${recordName ? ` (${recordName})` : ''}`);
  if (f.q) parts.push(`reason contains "${f.q}"`);
  if (parts.length === 0) parts.push('all events');
  parts.push(`sorted ${f.sort === 'asc' ? 'oldest' : 'newest'} first`);
  return parts;
}

function filterForAudit(f: Partial<AuditFilter>): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const k of ['from', 'to', 'actorId', 'action', 'entityType', 'entityId', 'q', 'sort'] as const)
    if (f[k] !== undefined) out[k] = f[k];
  return out;
}

function stamp(d: Date): string {
  return d
    .toISOString()
    .replace(/[-:]/g, '')
    .replace(/\.\d+Z$/, 'Z');
}

/** Iterates the matching events in pages (keyset), never holding more than one page. */
export async function* eventPages(
  db: Knex,
  f: Partial<AuditFilter>,
  o: repo.FilterOptions,
  pageSize = 1000,
): AsyncGenerator<AuditRow[]> {
  let cursor: repo.Cursor | null = null;
  const sort = f.sort ?? 'desc';
  for (;;) {
    const rows = await repo.pageQuery(db, f, o, { sort, cursor, limit: pageSize }, '*');
    const page = rows.length > pageSize ? rows.slice(0, pageSize) : rows;
    if (page.length) yield page;
    if (rows.length <= pageSize) return;
    const last = page[page.length - 1];
    cursor = { t: new Date(last.occurred_at).getTime(), id: Number(last.id) };
  }
}

/** Streams the CSV to the response; stops fetching while the client is not reading. */
export async function exportCsv(
  db: Knex,
  ctx: ExportContext,
  f: AuditFilter,
  res: Response,
  pageSize = 1000,
): Promise<void> {
  const scope = scopeFor(ctx.user);
  checkRange(f);
  const tz = validTimeZone(ctx.siteTimeZone);
  const now = new Date();
  const words = await describeFilter(db, f, scope, tz);
  // The export is recorded first, with its filter; the snapshot bound includes that event.
  const eventId = await auditNow(db, {
    actor: ctx.actor,
    action: 'audit.exported',
    entityType: 'audit_trail',
    entityId: null,
    after: { format: 'csv', filter: filterForAudit(f), scope },
    ip: ctx.ip,
  });
  const maxId = await repo.lastEventId(db);

  res.status(200);
  res.setHeader('Content-Type', 'text/csv; charset=utf-8');
  res.setHeader('Content-Disposition', `attachment; filename="audit-trail-${stamp(now)}.csv"`);
  res.setHeader('Cache-Control', 'no-store');
  res.setHeader('X-Audit-Export-Event', String(eventId));

  let closed = false;
  res.on('close', () => {
    closed = true;
  });
  const write = async (s: string) => {
    if (closed) return;
    if (res.write(s)) return;
    // Back-pressure: wait until the client has taken the data (or has gone).
    await new Promise<void>((resolve) => {
      const done = () => {
        res.off('drain', done);
        res.off('close', done);
        resolve();
      };
      res.on('drain', done);
      res.on('close', done);
    });
  };

  try {
    await write(
      '\uFEFF' +
        csvLine([`# Drumline audit trail export - ${ctx.siteName}`]) +
        csvLine([
          `# Generated ${now.toISOString()} (UTC) = ${formatSiteTime(now, tz, { seconds: true })} by ${ctx.user.fullName} (${ctx.user.username}); export event ${eventId}; events up to ${maxId}`,
        ]) +
        csvLine([`# Filter: ${words.join('; ')}`]) +
        csvLine([
          '# Times are UTC (ISO 8601). Each hash is SHA-256 over the event and the previous hash; before/after are JSON.',
        ]) +
        csvLine([
          '# actor_username, action_words, record_number and named_ids give the user names, event types in words and business numbers (L-, INV-, IC-, REF-) looked up at export; the stored ids stay in their own columns.',
        ]) +
        csvLine([
          '# A text cell that starts with = + - @, a tab or a carriage return has an apostrophe put in front (spreadsheet formula protection); the stored value is without it.',
        ]) +
        csvLine([...CSV_COLUMNS]),
    );
    for await (const page of eventPages(db, f, { scope, maxId }, pageSize)) {
      if (closed) return;
      const names = await namesFor(db, page);
      let chunk = '';
      for (const r of page) chunk += eventCsvLine(r, names);
      await write(chunk);
    }
    if (!closed) res.end();
  } catch (e) {
    // Headers are gone: the only honest signal left is to break the connection.
    childLog('audit-export').error({ err: safeError(e) }, 'audit export failed mid-stream');
    res.destroy(e as Error);
  }
}

export async function exportPdf(
  db: Knex,
  ctx: ExportContext,
  f: AuditFilter,
): Promise<{ pdf: Buffer; fileName: string; eventId: number; rows: number; more: boolean }> {
  const scope = scopeFor(ctx.user);
  checkRange(f);
  const tz = validTimeZone(ctx.siteTimeZone);
  const now = new Date();
  const words = await describeFilter(db, f, scope, tz);
  const eventId = await auditNow(db, {
    actor: ctx.actor,
    action: 'audit.exported',
    entityType: 'audit_trail',
    entityId: null,
    after: { format: 'pdf', filter: filterForAudit(f), scope, rowCap: PDF_ROW_CAP },
    ip: ctx.ip,
  });
  const maxId = await repo.lastEventId(db);
  const raw = await repo.pageQuery(
    db,
    f,
    { scope, maxId },
    { sort: f.sort ?? 'desc', cursor: null, limit: PDF_ROW_CAP },
    '*',
  );
  const more = raw.length > PDF_ROW_CAP;
  const rows = more ? raw.slice(0, PDF_ROW_CAP) : raw;
  const total = more ? await repo.countCapped(db, f, { scope, maxId }, COUNT_CAP) : { count: rows.length, exact: true };
  const names = await namesFor(db, rows);
  const pdf = await renderAuditPdf({
    siteName: ctx.siteName,
    timeZone: tz,
    generatedAt: now,
    generatedBy: `${ctx.user.fullName} (${ctx.user.username})`,
    exportEventId: eventId,
    filter: words,
    rows: rows.map((r) => repo.toDetail(r, names)),
    more,
    total,
  });
  return { pdf, fileName: `audit-trail-${stamp(now)}.pdf`, eventId, rows: rows.length, more };
}
