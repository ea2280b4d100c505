/**
 * Mail to everyone holding a role, one outbox message per recipient: the outbox keeps at most
 * 400 characters of addresses per message, so one message to a large group would lose
 * recipients; one message each also lets a bad address fail alone.
 */
import type { Knex } from 'knex';
import { emailsOfRole, enqueueMail } from '../../lib/mail';
import type { Role } from '../../lib/roles';

export async function mailRole(trx: Knex | Knex.Transaction, role: Role, subject: string, text: string, exceptUserId?: number): Promise<number> {
  const to = await emailsOfRole(trx, role, exceptUserId);
  for (const address of to) await enqueueMail(trx, { to: [address], subject, text });
  return to.length;
}
