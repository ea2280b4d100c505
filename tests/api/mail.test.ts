/** Mail goes through an outbox: captured by the local fake SMTP server; failures are retried, never lost. */
import { describe, expect, it } from 'vitest';
import { db, makeUser } from './helpers';
import { drainOutbox, enqueueMail, enqueueMailToRole, initMail, processOutbox } from '../../server/lib/mail';
import { capturedMail } from '../../server/lib/fake-smtp';
import { loadConfig } from '../../server/lib/config';

describe('mail outbox', () => {
  it('delivers queued mail to the fake SMTP server and marks it sent', async () => {
    await initMail(loadConfig({ smtp: null }));
    const qa = await makeUser(['qa_manager']);
    await db().transaction((trx) =>
      enqueueMailToRole(trx, 'qa_manager', 'Reference awaits approval', 'REF-TEST-1 awaits your approval.'),
    );
    // Earlier test files share this database and may have left mail queued: drain the outbox.
    const sent = await processOutbox(db(), 100_000);
    expect(sent).toBeGreaterThan(0);
    const address = `${qa.username}@test.example`;
    const m = capturedMail().find((x) => x.subject === 'Reference awaits approval' && x.to.includes(address));
    expect(m).toBeDefined();
    expect(m!.to).toEqual([address]); // one message per recipient
    expect(m!.text).toContain('REF-TEST-1');
  });

  it('a mail to an unreachable address is retried later and kept, not lost', async () => {
    // The fake server refuses recipients under the reserved .invalid domain (RFC 2606).
    const id = await db().transaction((trx) =>
      enqueueMail(trx, { to: ['nobody@mailbox.invalid'], subject: 'bad', text: 'x' }),
    );
    await processOutbox(db(), 100_000);
    const row = (await db()('mail_outbox').where({ id: id! }).first())!;
    expect(row.status).toBe('queued');
    expect(row.attempts).toBe(1);
    expect(row.last_error).toMatch(/550|unavailable/);
    expect(new Date(row.next_attempt_at).getTime()).toBeGreaterThan(Date.now());
  });
});

describe('a backlog', () => {
  it('drains in one run of the mail job, over one reused connection, not one batch per tick', async () => {
    await initMail(loadConfig({ smtp: null }));
    await processOutbox(db(), 100_000);
    const to = Array.from({ length: 180 }, (_, i) => `backlog-${i}@test.example`);
    const first = await db().transaction((trx) => enqueueMail(trx, { to, subject: 'backlog', text: 'x' }));
    const sent = await drainOutbox(db(), 60_000, 50);
    expect(sent).toBeGreaterThanOrEqual(180);
    const left = await db()('mail_outbox').where('id', '>=', first!).andWhere({ status: 'queued' }).count({ n: '*' });
    expect(Number(left[0].n)).toBe(0);
  });
});

describe('recipients', () => {
  it('a mail to many people becomes one message each, none cut off', async () => {
    const to = Array.from({ length: 30 }, (_, i) => `person.number.${i}@a-rather-long-domain-name.example`);
    const first = await db().transaction((trx) => enqueueMail(trx, { to, subject: 'many', text: 'x' }));
    const rows = await db()('mail_outbox').where('id', '>=', first!).andWhere({ subject: 'many' });
    expect(rows.map((r) => r.to_address).sort()).toEqual([...to].sort());
  });
});
