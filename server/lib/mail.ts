/**
 * E-mail through nodemailer over SMTP, via an outbox table: GMP actions only enqueue a row in
 * their own transaction, so a mail failure can never block or undo them. A worker sends queued
 * rows, retries failures with back-off (up to MAX_ATTEMPTS) and logs each outcome.
 * Without SMTP_HOST (development and tests) a local fake SMTP server on loopback captures every
 * message (server/lib/fake-smtp.ts); admins read them on the captured-mail page in development.
 */
import type { Knex } from 'knex';
import nodemailer, { type Transporter } from 'nodemailer';
import type { AppConfig } from './config';
import { parseJson } from './db';
import type { MailOutboxRow } from './db-tables';
import type { Role } from './contract';
import { startFakeSmtp } from './fake-smtp';
import { PROCESS_ID, startJob, type RunningJob } from './lease';
import { childLog, safeError } from './log';

const mailLog = childLog('mail');

export const MAX_ATTEMPTS = 8;

export interface MailInput {
  to: string[];
  subject: string;
  text: string;
}

/**
 * Queues one message per recipient (so a long recipient list is never cut, and one bad address
 * cannot hold up the others). Returns the id of the first row, or null when nobody is addressed.
 */
export async function enqueueMail(trx: Knex | Knex.Transaction, m: MailInput): Promise<number | null> {
  const to = [...new Set(m.to.map((t) => t.trim()).filter(Boolean))];
  if (to.length === 0) return null;
  const now = new Date();
  let first: number | null = null;
  for (const address of to) {
    const [id] = await trx('mail_outbox').insert({
      to_address: address.slice(0, 400),
      subject: m.subject.slice(0, 300),
      body: m.text,
      status: 'queued',
      attempts: 0,
      created_at: now,
      next_attempt_at: now,
    });
    first ??= id;
  }
  return first;
}

/** Active accounts holding a role, e.g. every verifier. */
export async function emailsOfRole(db: Knex | Knex.Transaction, role: Role, exceptUserId?: number): Promise<string[]> {
  const users = await db('app_user').where({ active: 1 }).select('id', 'email', 'roles');
  return users
    .filter((u) => parseJson<string[]>(u.roles, []).includes(role) && u.id !== exceptUserId)
    .map((u) => u.email);
}

export async function enqueueMailToRole(
  trx: Knex | Knex.Transaction,
  role: Role,
  subject: string,
  text: string,
  exceptUserId?: number,
): Promise<number | null> {
  return enqueueMail(trx, { to: await emailsOfRole(trx, role, exceptUserId), subject, text });
}

let transporter: Transporter | null = null;
let fromAddress = 'drumline@localhost';

/** Sets up the transport: the configured SMTP server, or the local fake one. */
export async function initMail(config: AppConfig): Promise<void> {
  if (transporter) return;
  if (config.smtp) {
    fromAddress = config.smtp.from;
    transporter = nodemailer.createTransport({
      pool: true, // one connection carries many messages, so a backlog drains quickly
      host: config.smtp.host,
      port: config.smtp.port,
      secure: config.smtp.secure,
      auth: config.smtp.user ? { user: config.smtp.user, pass: config.smtp.password ?? '' } : undefined,
    });
  } else {
    const port = await startFakeSmtp(Number(process.env.DEV_SMTP_PORT ?? 0));
    transporter = nodemailer.createTransport({ pool: true, host: '127.0.0.1', port, secure: false, ignoreTLS: true });
    mailLog.info({ port }, 'development: a local fake SMTP server on loopback captures all mail');
  }
}

/** Seconds after which a row still 'sending' is taken to belong to a server that died (MAIL_SENDING_TIMEOUT_S). */
export function sendingTimeoutMs(): number {
  const v = Number(process.env.MAIL_SENDING_TIMEOUT_S);
  return (Number.isFinite(v) && v > 0 ? v : 300) * 1000;
}

/**
 * Puts rows back in the queue that a server claimed ('sending') and never finished: the server
 * died between the claim and the outcome. Each counts as an attempt, so a message that kills its
 * sender every time still ends as 'failed'. Delivery is at least once: a server that died after
 * the SMTP server accepted the message but before it recorded 'sent' causes a second copy.
 */
export async function requeueStale(db: Knex, timeoutMs = sendingTimeoutMs()): Promise<number> {
  const before = new Date(Date.now() - timeoutMs);
  // typed by the row rather than the table entry: the table's update type takes no raw SQL, and
  // the new status must be computed from the attempts before this update in the same statement
  return db<MailOutboxRow>('mail_outbox')
    .where({ status: 'sending' })
    .andWhere((q) => q.where('claimed_at', '<', before).orWhereNull('claimed_at'))
    .update({
      status: db.raw("IF(attempts + 1 >= ?, 'failed', 'queued')", [MAX_ATTEMPTS]),
      attempts: db.raw('attempts + 1'),
      last_error: 'taken up again: the server that was sending it stopped before it finished',
      next_attempt_at: new Date(),
      claimed_at: null,
      claimed_by: null,
    });
}

/** Sends what is due. Returns how many were sent. Safe to call concurrently (rows are claimed). */
export async function processOutbox(db: Knex, limit = 20): Promise<number> {
  if (!transporter) return 0;
  const requeued = await requeueStale(db);
  if (requeued) mailLog.warn({ requeued }, 'rows left sending by a stopped server were queued again');
  const due = await db('mail_outbox')
    .where({ status: 'queued' })
    .andWhere('next_attempt_at', '<=', new Date())
    .orderBy('id')
    .limit(limit);
  let sent = 0;
  for (const m of due) {
    const claimed = await db('mail_outbox')
      .where({ id: m.id, status: 'queued', attempts: m.attempts })
      .update({ status: 'sending', claimed_at: new Date(), claimed_by: PROCESS_ID });
    if (!claimed) continue;
    try {
      await transporter.sendMail({ from: fromAddress, to: m.to_address, subject: m.subject, text: m.body });
      await db('mail_outbox')
        .where({ id: m.id })
        .update({
          status: 'sent',
          sent_at: new Date(),
          attempts: m.attempts + 1,
          last_error: null,
          claimed_at: null,
          claimed_by: null,
        });
      sent++;
    } catch (e) {
      const attempts = m.attempts + 1;
      const failed = attempts >= MAX_ATTEMPTS;
      const delayMs = Math.min(60 * 60_000, 15_000 * 2 ** (attempts - 1));
      await db('mail_outbox')
        .where({ id: m.id })
        .update({
          status: failed ? 'failed' : 'queued',
          attempts,
          last_error: String((e as Error).message ?? e).slice(0, 2000),
          next_attempt_at: new Date(Date.now() + delayMs),
          claimed_at: null,
          claimed_by: null,
        });
      mailLog.error({ mailId: m.id, attempts, gaveUp: failed, err: safeError(e) }, 'sending failed');
    }
  }
  return sent;
}

/**
 * One run of the mail job: sends batches while whole batches go out, for at most `budgetMs`,
 * so a backlog (a lot verified with many verifiers addressed) drains in one run, not 20 every tick.
 */
export async function drainOutbox(db: Knex, budgetMs = 15_000, batch = 50): Promise<number> {
  const until = Date.now() + budgetMs;
  let total = 0;
  for (;;) {
    const sent = await processOutbox(db, batch);
    total += sent;
    if (sent < batch || Date.now() > until) return total;
  }
}

let job: RunningJob | null = null;
/** Sends the outbox once per site: every process runs the loop, the holder of the 'mail' lease sends. */
export function startMailWorker(db: Knex, intervalMs = 2000): void {
  job ??= startJob(db, { name: 'mail', intervalMs, run: drainOutbox });
}

export async function stopMailWorker(): Promise<void> {
  await job?.stop();
  job = null;
  // A pooled transport keeps its connections open until closed.
  transporter?.close();
  transporter = null;
}
