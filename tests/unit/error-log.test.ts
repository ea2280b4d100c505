/**
 * What the log may say about an unexpected database error (docs/certificates.md, "When issuing
 * fails"): knex puts the SQL statement and its bound values in front of its error message (here a
 * PDF as a hex literal) and mysql2 keeps the statement in `sql`; neither may reach the log.
 * The error below has the shape knex 3 and mysql2 3 give a failed INSERT (common practice: read
 * from their error objects, not from a document).
 */
import { describe, expect, it } from 'vitest';
import { loggableError } from '../../server/lib/errors';
import { failureSentence } from '../../server/modules/certificates/issue';

function knexInsertError(): Error & Record<string, unknown> {
  const pdfHex = Buffer.from('%PDF-1.7 secret certificate bytes').toString('hex');
  const sql = "insert into `certificate` (`number`, `pdf`) values ('IC-2026-00001', X'" + pdfHex + "')";
  const e = new Error(`${sql} - Duplicate entry 'IC-2026-00001' for key 'certificate_number_unique'`) as Error &
    Record<string, unknown>;
  Object.assign(e, {
    code: 'ER_DUP_ENTRY',
    errno: 1062,
    sqlState: '23000',
    sqlMessage: "Duplicate entry 'IC-2026-00001' for key 'certificate_number_unique'",
    sql,
  });
  return e;
}

describe('database errors in the log', () => {
  it('the request error log keeps the code, the server message and the stack, never the statement or its values', () => {
    const logged = String(loggableError(knexInsertError()));
    expect(logged).toMatch(/^database error ER_DUP_ENTRY \(1062\): Duplicate entry 'IC-2026-00001'/);
    expect(logged).toMatch(/\n\s+at /); // the stack frames stay
    expect(logged).not.toMatch(/insert into/i);
    expect(logged).not.toContain(Buffer.from('%PDF').toString('hex'));
  });

  it('the certificate failure sentence is the server message, at most 300 characters', () => {
    const s = failureSentence(knexInsertError());
    expect(s).toBe("database error ER_DUP_ENTRY: Duplicate entry 'IC-2026-00001' for key 'certificate_number_unique'");
    expect(failureSentence(new Error('x'.repeat(1000))).length).toBe(300);
  });

  it('other errors are logged unchanged', () => {
    const e = new Error('plain');
    expect(loggableError(e)).toBe(e);
  });
});
