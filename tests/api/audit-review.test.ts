/**
 * The periodic audit-trail review (EU GMP Annex 11 §9: audit trails "regularly reviewed";
 * docs/trending.md): exception lists of a period, QA's signed review with findings and actions,
 * the list, the PDF, the due date from the site setting, and the refusals. Real MariaDB.
 */
import { execFileSync } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkSignature } from '../../server/modules/integrity/service';
import {
  remindIfDue,
  reviewDue,
  startAuditReviewReminderJob,
  stopAuditReviewReminderJob,
} from '../../server/modules/audit-review/service';
import { binaryBody, db, ownerDb, sig, untyped } from './helpers';
import { agent, retire } from './fixtures-testing';
import request from 'supertest';
import { testApp } from './helpers';

type Signed = Awaited<ReturnType<typeof agent>>;
let quinn: Signed;
let auditor: Signed;
let olga: Signed;
let victim: Signed;

const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10);

beforeAll(async () => {
  quinn = await agent(['qa_manager']);
  auditor = await agent(['auditor']);
  olga = await agent(['operator']);
  victim = await agent(['operator']);
  // a failed sign-in today: an exception of the period
  await request(testApp())
    .post('/api/auth/sign-in')
    .send({ username: victim.user.username, password: 'wrong-password-1' });
});
afterAll(retire);

const body = (over: Record<string, unknown> = {}) => ({
  from: day(-30),
  to: day(-1),
  scope: ['failed-sign-ins', 'failed-signatures', 'role-changes'],
  findings: 'Failed sign-ins were typing errors; no pattern of attack.',
  actions: 'none',
  signature: sig(quinn.user),
  ...over,
});

describe('exception lists', () => {
  it('list the failed sign-in of the period, counted in full', async () => {
    const res = await quinn.agent.get(`/api/audit-reviews/exceptions?from=${day(-1)}&to=${day(0)}`);
    expect(res.status).toBe(200);
    const failed = res.body.lists.find((l: { key: string }) => l.key === 'failed-sign-ins');
    expect(failed.count).toBeGreaterThan(0);
    expect(failed.events.some((e: { action: string; actorName: string }) => e.action === 'auth.sign-in-failed')).toBe(
      true,
    );
    expect(res.body.totalEvents).toBeGreaterThan(0);
    // a period long past has none
    const old = await auditor.agent.get('/api/audit-reviews/exceptions?from=2001-01-01&to=2001-01-31');
    expect(old.body.lists.every((l: { count: number }) => l.count === 0)).toBe(true);
  });

  it('refuses a reversed period and roles that do not review', async () => {
    const rev = await quinn.agent.get(`/api/audit-reviews/exceptions?from=${day(0)}&to=${day(-3)}`);
    expect(rev.status).toBe(400);
    expect((await olga.agent.get(`/api/audit-reviews/exceptions?from=${day(-3)}&to=${day(0)}`)).status).toBe(403);
  });
});

describe('the signed review', () => {
  let id: number;

  it('refuses a period that is not over, an empty scope, a wrong password and a non-QA role; nothing is stored', async () => {
    const before = await db()('audit_review').count<{ n: number }[]>({ n: '*' });
    const notOver = await quinn.agent.post('/api/audit-reviews').send(body({ to: day(0) }));
    expect(notOver.status).toBe(422);
    expect(notOver.body.error.code).toBe('PERIOD_NOT_OVER');
    expect((await quinn.agent.post('/api/audit-reviews').send(body({ scope: [] }))).status).toBe(400);
    expect((await quinn.agent.post('/api/audit-reviews').send(body({ findings: 'ok' }))).status).toBe(400);
    const wrong = await quinn.agent
      .post('/api/audit-reviews')
      .send(body({ signature: { username: quinn.user.username, password: 'not-my-password' } }));
    expect(wrong.status).toBe(401);
    expect((await auditor.agent.post('/api/audit-reviews').send(body({ signature: sig(auditor.user) }))).status).toBe(
      403,
    );
    const after = await db()('audit_review').count<{ n: number }[]>({ n: '*' });
    expect(after[0].n).toBe(before[0].n);
  });

  it('QA records the review: numbered, signed over its content, audited, listed, and its PDF', async () => {
    const res = await quinn.agent.post('/api/audit-reviews').send(body());
    expect(res.status).toBe(201);
    id = res.body.id;
    expect(res.body.number).toMatch(/^ATR-\d{4}-\d{3}$/);
    expect(res.body.scope).toEqual(['failed-sign-ins', 'failed-signatures', 'role-changes']);
    expect(res.body.exceptions.lists.map((l: { key: string }) => l.key)).toEqual(res.body.scope);
    expect(res.body.signatures).toHaveLength(1);
    expect(res.body.signatures[0]).toMatchObject({ meaning: 'audit-trail-reviewed', userId: quinn.user.id });
    const ev = await db()('audit_event').where({ action: 'audit.reviewed', entity_id: String(id) });
    expect(ev).toHaveLength(1);
    // the integrity sweep's recipe rebuilds exactly the signed content
    const s = (await db()('e_signature')
      .where({ entity_type: 'audit_review', entity_id: String(id) })
      .first())!;
    expect(await checkSignature(db(), s, { foundIn: 'sweep' })).toBe(true);
    const list = await auditor.agent.get('/api/audit-reviews');
    expect(list.body.some((r: { id: number }) => r.id === id)).toBe(true);
    const pdf = await auditor.agent.get(`/api/audit-reviews/${id}/pdf`).buffer(true).parse(binaryBody);
    expect(pdf.status).toBe(200);
    expect(pdf.headers['content-type']).toBe('application/pdf');
    const text = execFileSync('pdftotext', ['-', '-'], { input: pdf.body as Buffer }).toString();
    expect(text).toContain(res.body.number);
    expect(text).toContain('Failed sign-ins were typing errors');
    expect(text).toContain(quinn.user.fullName);
  });

  it('the database refuses to change or delete a review (runtime: no privilege; owner: trigger)', async () => {
    await expect(untyped(db(), 'audit_review').where({ id }).update({ findings: 'rewritten' })).rejects.toThrow(
      /UPDATE command denied/,
    );
    await expect(untyped(ownerDb(), 'audit_review').where({ id }).update({ findings: 'rewritten' })).rejects.toThrow(
      /append-only/,
    );
    await expect(ownerDb()('audit_review').where({ id }).delete()).rejects.toThrow(/append-only/);
  });

  it('is due again one interval after the end of the reviewed period', async () => {
    const due = await quinn.agent.get('/api/audit-reviews/due');
    expect(due.status).toBe(200);
    expect(due.body.intervalMonths).toBe(1);
    const latest = (await db()('audit_review').orderBy('period_to', 'desc').orderBy('id', 'desc').first('period_to'))!;
    const to = new Date(latest.period_to).toISOString().slice(0, 10);
    const r = await reviewDue(db(), 1, to);
    expect(r.due).toBe(false);
    const next = await reviewDue(db(), 1, r.dueFrom!);
    expect(next.due).toBe(true);
    expect(next.text).toMatch(/is due since/);
    expect((await olga.agent.get('/api/audit-reviews/due')).status).toBe(403);
  });

  it('the reminder mails QA once per due period, nothing before the review is due, and keeps its record append-only', async () => {
    const latest = (await db()('audit_review').orderBy('period_to', 'desc').orderBy('id', 'desc').first('period_to'))!;
    const to = new Date(latest.period_to).toISOString().slice(0, 10);
    const r = await reviewDue(db(), 1, to);
    const reminders = (dueFrom: string) =>
      db()('mail_outbox').where('subject', 'like', `Audit-trail review due since ${dueFrom}%`);
    // not due yet: no mail
    expect(await remindIfDue(db(), 1, to)).toEqual({ due: false, mailed: false, dueKey: null });
    expect(await reminders(r.dueFrom!)).toEqual([]);
    // due: one mail to every QA manager
    const first = await remindIfDue(db(), 1, r.dueFrom!);
    expect(first).toEqual({ due: true, mailed: true, dueKey: r.dueFrom });
    const sent = await reminders(r.dueFrom!);
    expect(sent.map((m) => m.to_address)).toContain(`${quinn.user.username}@test.example`);
    expect(sent.map((m) => m.to_address)).not.toContain(`${olga.user.username}@test.example`);
    expect(sent[0].body).toMatch(/\/audit-reviews/);
    // the same due period again, and a later day of it: no repeat mail
    expect((await remindIfDue(db(), 1, r.dueFrom!)).mailed).toBe(false);
    const later = new Date(new Date(`${r.dueFrom}T00:00:00Z`).getTime() + 5 * 86_400_000).toISOString().slice(0, 10);
    expect(await remindIfDue(db(), 1, later)).toEqual({ due: true, mailed: false, dueKey: r.dueFrom });
    expect(await reminders(r.dueFrom!)).toHaveLength(sent.length);
    // the record of the reminder: one row, never changed or deleted by the runtime account
    const rows = await db()('audit_review_reminder').where({ due_key: r.dueFrom! });
    expect(rows).toHaveLength(1);
    expect(rows[0].recipients).toBe(sent.length);
    await expect(db()('audit_review_reminder').where({ id: rows[0].id }).delete()).rejects.toThrow(
      /DELETE command denied/,
    );
    await expect(
      untyped(ownerDb(), 'audit_review_reminder').where({ id: rows[0].id }).update({ recipients: 0 }),
    ).rejects.toThrow(/append-only/);
  });

  it('the reminder runs as a job under its lease, once per site', async () => {
    const job = startAuditReviewReminderJob(db(), 1, 3_600_000);
    try {
      expect(await job.tick()).toBe(true);
      const lease = (await db()('job_lease').where({ name: 'audit-review-reminder' }).first())!;
      expect(lease.last_ok_at).toBeTruthy();
      expect(lease.last_error).toBeNull();
      // a process that does not hold the lease does not run it
      await db()('job_lease')
        .where({ name: 'audit-review-reminder' })
        .update({ holder: 'another-app-server', expires_at: new Date(Date.now() + 60_000) });
      expect(await job.tick()).toBe(false);
    } finally {
      await stopAuditReviewReminderJob();
    }
  });
});
