/**
 * Human record numbers (lot L-2026-00042, investigation INV-2026-0007): the next number of the
 * year, made race-safe by the UNIQUE index rather than by a lock. Two transactions that pick
 * the same number both try to insert it; InnoDB lets one through and gives the other a
 * duplicate-key error for that statement only (the transaction stays open), so the loser
 * simply tries the next number.
 */
import type { Knex } from 'knex';

export interface NumberedInsert<R> {
  table: string;
  column: string;
  /** e.g. 'L-2026-' */
  prefix: string;
  /** digits of the sequence, zero-padded */
  width: number;
  row: (number: string) => R;
}

export function yearOf(d = new Date()): number {
  return d.getUTCFullYear();
}

export async function insertWithNextNumber<R extends object>(
  trx: Knex.Transaction,
  spec: NumberedInsert<R>,
): Promise<{ id: number; number: string }> {
  const r: { n: string | null } | undefined = await trx(spec.table)
    .where(spec.column, 'like', `${spec.prefix}%`)
    .max(spec.column, { as: 'n' })
    .first();
  const last = r?.n ?? null;
  let seq = last ? Number(last.slice(spec.prefix.length)) + 1 : 1;
  for (let tries = 0; tries < 50; tries++, seq++) {
    const number = spec.prefix + String(seq).padStart(spec.width, '0');
    try {
      const [id] = await trx(spec.table).insert(spec.row(number));
      return { id, number };
    } catch (e) {
      if ((e as { code?: string }).code !== 'ER_DUP_ENTRY') throw e;
      // another unique key of the row (e.g. an ERP receipt number) is not a number collision
      if (!String((e as { sqlMessage?: string }).sqlMessage ?? '').includes(spec.column)) throw e;
    }
  }
  throw new Error(`could not allocate a number in ${spec.table} after 50 tries`);
}
