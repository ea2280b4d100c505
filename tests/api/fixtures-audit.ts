/** Fixtures of the audit trail tests: seeded events of a private record type, and a CSV reader. */
import { db, uniqueName } from './helpers';
import { bulkAppendAudit, type BulkEvent } from '../../server/modules/audit/bulk';

/** A record type no other test uses (entity_type is at most 40 characters). */
export function privateEntityType(prefix: string): string {
  return uniqueName(prefix)
    .replace(/[^a-z0-9_]/g, '_')
    .slice(0, 40);
}

/**
 * Appends `count` events of one private record type, 1 ms apart, starting now, through the
 * same hashing as appendAudit (one valid chain). Returns the rows as stored, oldest first.
 */
export async function seedEvents(
  count: number,
  make: (i: number) => Omit<BulkEvent, 'occurredAt'>,
  opts: { batchSize?: number; chunkSize?: number } = {},
) {
  const t0 = Date.now();
  const { firstId, lastId } = await bulkAppendAudit(
    db(),
    count,
    (i) => ({ occurredAt: new Date(t0 + i), ...make(i) }),
    opts,
  );
  return { firstId, lastId };
}

/**
 * RFC 4180 reader written for the tests (independent of the exporter): quoted fields may hold
 * commas, doubled quotes and line breaks; records end with CRLF or LF.
 */
export function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = '';
  let i = 0;
  let quoted = false;
  while (i < text.length) {
    const c = text[i];
    if (quoted) {
      if (c === '"') {
        if (text[i + 1] === '"') {
          field += '"';
          i += 2;
          continue;
        }
        quoted = false;
        i++;
        continue;
      }
      field += c;
      i++;
      continue;
    }
    if (c === '"' && field === '') {
      quoted = true;
      i++;
    } else if (c === ',') {
      row.push(field);
      field = '';
      i++;
    } else if (c === '\r' && text[i + 1] === '\n') {
      row.push(field);
      rows.push(row);
      row = [];
      field = '';
      i += 2;
    } else if (c === '\n') {
      row.push(field);
      rows.push(row);
      row = [];
      field = '';
      i++;
    } else {
      field += c;
      i++;
    }
  }
  if (field !== '' || row.length) {
    row.push(field);
    rows.push(row);
  }
  return rows;
}
