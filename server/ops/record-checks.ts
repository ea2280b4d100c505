/**
 * Whole-database checks that a site runs after a restore, and that the scale-out tests run after
 * concurrent work (docs/operations.md): the audit chain, every certificate (bytes against their
 * recorded SHA-256, embedded signature valid and made by the recorded key), every stored file
 * against its recorded SHA-256, and business numbers without a duplicate or a gap. Read-only.
 */
import crypto from 'node:crypto';
import type { Knex } from 'knex';
import { verifyChain } from '../lib/audit';
import { verifyPdfSignature } from '../lib/signing';
import { trustedTsaRoots } from '../modules/certificates/config';
import type { ChainReport } from '../lib/contract';
import { must } from '../lib/db';

export interface RecordCheck {
  chain: ChainReport;
  certificates: { checked: number; problems: string[] };
  files: { checked: number; problems: string[] };
  numbers: { problems: string[] };
}

const sha = (b: Buffer) => crypto.createHash('sha256').update(b).digest('hex');

export async function checkCertificates(db: Knex): Promise<{ checked: number; problems: string[] }> {
  const problems: string[] = [];
  const ids = await db('certificate').orderBy('id').select('id');
  for (const { id } of ids) {
    // listed just above; certificates are never deleted
    const row = await db('certificate').where({ id }).first('number', 'sha256', 'size', 'pdf', 'signer_fingerprint');
    const c = must(row, `Certificate ${id}`);
    const pdf = c.pdf;
    if (sha(pdf) !== c.sha256) problems.push(`${c.number}: bytes do not match the recorded SHA-256`);
    if (pdf.length !== Number(c.size)) problems.push(`${c.number}: size differs from the recorded size`);
    const s = verifyPdfSignature(pdf, { tsaTrustedPem: trustedTsaRoots() });
    if (!s.valid) problems.push(`${c.number}: signature does not verify (${s.problem ?? 'invalid'})`);
    else if (s.fingerprint !== c.signer_fingerprint) problems.push(`${c.number}: signed by another key`);
  }
  return { checked: ids.length, problems };
}

export async function checkStoredFiles(db: Knex, afterId = 0): Promise<{ checked: number; problems: string[] }> {
  const problems: string[] = [];
  let last = afterId;
  let checked = 0;
  for (;;) {
    const rows = await db('stored_file')
      .where('id', '>', last)
      .orderBy('id')
      .limit(200)
      .select('id', 'sha256', 'size', 'data');
    if (!rows.length) break;
    for (const r of rows) {
      if (sha(r.data) !== r.sha256) problems.push(`stored file ${r.id}: bytes do not match the recorded SHA-256`);
      if (r.data.length !== Number(r.size)) problems.push(`stored file ${r.id}: size differs`);
      checked++;
      last = Number(r.id);
    }
  }
  return { checked, problems };
}

/** Numbers PREFIX-YYYY-NNNNN of one table: none twice, and per year 1..max with no gap. */
export async function checkNumbers(db: Knex, table: string, column: string): Promise<string[]> {
  // the table is named at run time, so its rows are untyped: each holds the text column asked for
  const rows: Record<string, string>[] = await db(table).select(column);
  const problems: string[] = [];
  const byYear = new Map<string, number[]>();
  for (const r of rows) {
    const m = /^(.*-\d{4})-(\d+)$/.exec(r[column]);
    if (!m) continue;
    const list = byYear.get(m[1]) ?? [];
    list.push(Number(m[2]));
    byYear.set(m[1], list);
  }
  for (const [prefix, seqs] of byYear) {
    seqs.sort((a, b) => a - b);
    for (let i = 0; i < seqs.length; i++) {
      if (i > 0 && seqs[i] === seqs[i - 1]) problems.push(`${table}: ${prefix}-${seqs[i]} twice`);
      else if (seqs[i] !== (i === 0 ? 1 : seqs[i - 1] + 1) && !(i > 0 && seqs[i] === seqs[i - 1]))
        problems.push(`${table}: gap before ${prefix}-${seqs[i]}`);
    }
  }
  return problems;
}

export async function checkRecords(db: Knex): Promise<RecordCheck> {
  return {
    chain: await verifyChain(db),
    certificates: await checkCertificates(db),
    files: await checkStoredFiles(db),
    numbers: {
      problems: [
        ...(await checkNumbers(db, 'lot', 'lot_number')),
        ...(await checkNumbers(db, 'certificate', 'number')),
      ],
    },
  };
}
