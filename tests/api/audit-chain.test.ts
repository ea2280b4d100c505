/**
 * The chain check the auditor runs from the UI (GET /api/audit/verify) reports the FIRST broken
 * event after tampering behind the application's back - an altered row, an altered row whose own
 * hash was recomputed, a removed row, a removed last row - and "intact" with the number of events
 * and the last hash otherwise (21 CFR 11.10(a)(e); EU GMP Annex 11 §9).
 * Tampering uses the owner account with the protecting trigger dropped for a moment; every change
 * is undone in `finally`, because the other test files share this database.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentFor, db, ownerDb, untyped } from './helpers';
import { privateEntityType, seedEvents } from './fixtures-audit';
import { rowHash, verifyChain, type AuditRow } from '../../server/lib/audit';
import { auditKey } from '../../server/lib/audit-key';

const owner = ownerDb();
const T = privateEntityType('chn');
type Agent = Awaited<ReturnType<typeof agentFor>>['agent'];
let auditor: Agent;
let ids: number[] = [];

const TRIGGERS = {
  update:
    "CREATE TRIGGER audit_event_no_update BEFORE UPDATE ON audit_event FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit_event is append-only'",
  delete:
    "CREATE TRIGGER audit_event_no_delete BEFORE DELETE ON audit_event FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit_event is append-only'",
};

/** Runs `fn` with one protecting trigger dropped, and always puts the trigger back. */
async function withoutTrigger(kind: 'update' | 'delete', fn: () => Promise<unknown>): Promise<void> {
  await owner.raw(`DROP TRIGGER audit_event_no_${kind}`);
  try {
    await fn();
  } finally {
    await owner.raw(TRIGGERS[kind]);
  }
}

async function row(id: number): Promise<AuditRow> {
  return (await owner('audit_event').where({ id }).first())!;
}

async function restore(original: AuditRow): Promise<void> {
  const { id, ...rest } = original;
  await withoutTrigger('update', () => untyped(owner, 'audit_event').where({ id }).update(rest));
}

beforeAll(async () => {
  ({ agent: auditor } = await agentFor(['auditor']));
  await seedEvents(6, (i) => ({
    actor: { id: null, name: 'chain test' },
    action: 'test.chain',
    entityType: T,
    entityId: String(i),
    after: { i },
    reason: `original ${i}`,
  }));
  ids = (await db()('audit_event').where({ entity_type: T }).orderBy('id')).map((r) => Number(r.id));
  expect(ids.length).toBe(6);
});

afterAll(async () => {
  const report = await verifyChain(db());
  await owner.destroy();
  // leave the shared database as found
  expect(report.ok).toBe(true);
});

describe('chain check from the UI', () => {
  it('reports intact with the number of events and the last hash', async () => {
    const res = await auditor.get('/api/audit/verify');
    expect(res.status).toBe(200);
    const head = (await db()('audit_head').where({ id: 1 }).first())!;
    expect(res.body).toMatchObject({
      ok: true,
      events: Number(head.last_id),
      lastId: Number(head.last_id),
      lastHash: head.last_hash,
      keyedFrom: Number(head.keyed_from),
    });
  });

  it('names the first of two altered events, and the problem', async () => {
    const a = await row(ids[1]);
    const b = await row(ids[3]);
    try {
      await withoutTrigger('update', async () => {
        await untyped(owner, 'audit_event').where({ id: ids[3] }).update({ reason: 'changed later' });
        await untyped(owner, 'audit_event').where({ id: ids[1] }).update({ after_json: '{"i":99}' });
      });
      const res = await auditor.get('/api/audit/verify');
      expect(res.body).toMatchObject({
        ok: false,
        brokenAt: ids[1],
        problem: 'content does not match its hash (altered)',
        found: a.hash,
      });
      expect(res.body.events).toBe(ids[1] - 1); // events before the break check out
    } finally {
      await restore(a);
      await restore(b);
    }
    expect((await auditor.get('/api/audit/verify')).body.ok).toBe(true);
  });

  it('an altered event whose hash was recomputed without the chain key (plain SHA-256) is found at that event', async () => {
    // The keyed chain (HMAC with a key outside the database; docs/compliance.md): the owner
    // account can recompute a SHA-256, but not the keyed hash.
    const a = await row(ids[2]);
    try {
      const { hash: _old, ...content } = { ...a, reason: 'quietly rewritten' };
      await withoutTrigger('update', () =>
        untyped(owner, 'audit_event')
          .where({ id: ids[2] })
          .update({ reason: content.reason, hash: rowHash(content) }),
      );
      const res = await auditor.get('/api/audit/verify');
      expect(res.body).toMatchObject({
        ok: false,
        brokenAt: ids[2],
        problem: 'content does not match its hash (altered)',
      });
    } finally {
      await restore(a);
    }
  });

  it('an altered event whose own hash was recomputed with the key breaks the link of the next event', async () => {
    const a = await row(ids[2]);
    try {
      const forged = { ...a, reason: 'quietly rewritten' };
      const { hash: _old, ...content } = forged;
      await withoutTrigger('update', () =>
        untyped(owner, 'audit_event')
          .where({ id: ids[2] })
          .update({ reason: forged.reason, hash: rowHash(content, auditKey().key) }),
      );
      const res = await auditor.get('/api/audit/verify');
      expect(res.body).toMatchObject({
        ok: false,
        brokenAt: ids[3],
        problem: 'link to the previous event does not match',
      });
    } finally {
      await restore(a);
    }
  });

  it('a removed event is reported as missing', async () => {
    const a = await row(ids[4]);
    try {
      await withoutTrigger('delete', () => owner('audit_event').where({ id: ids[4] }).delete());
      const res = await auditor.get('/api/audit/verify');
      expect(res.body).toMatchObject({ ok: false, brokenAt: ids[4] });
      expect(res.body.problem).toMatch(new RegExp(`event ${ids[4]} is missing`));
    } finally {
      if (!(await owner('audit_event').where({ id: ids[4] }).first())) await owner('audit_event').insert(a);
    }
    expect((await auditor.get('/api/audit/verify')).body.ok).toBe(true);
  });

  it('a removed LAST event is caught by the head record', async () => {
    // Append one more event so that it is the last, then remove it behind the app's back.
    await seedEvents(1, () => ({ actor: { id: null, name: 'chain test' }, action: 'test.chain-last', entityType: T }));
    const last = (await owner('audit_event').orderBy('id', 'desc').first())!;
    try {
      await withoutTrigger('delete', () => owner('audit_event').where({ id: last.id }).delete());
      const res = await auditor.get('/api/audit/verify');
      expect(res.body).toMatchObject({ ok: false, brokenAt: Number(last.id) });
      expect(res.body.problem).toMatch(/events removed/);
    } finally {
      if (!(await owner('audit_event').where({ id: last.id }).first())) await owner('audit_event').insert(last);
    }
    expect((await auditor.get('/api/audit/verify')).body.ok).toBe(true);
  });
  it('an event inserted beyond the head, around the audit service, is reported', async () => {
    const head = (await owner('audit_head').where({ id: 1 }).first())!;
    const last = await row(Number(head.last_id));
    const { id: _id, ...rest } = last;
    const fake = Number(head.last_id) + 1;
    await owner('audit_event').insert({ ...rest, id: fake, prev_hash: last.hash });
    try {
      const res = await auditor.get('/api/audit/verify');
      expect(res.body).toMatchObject({ ok: false, brokenAt: Number(head.last_id) + 1 });
      expect(res.body.problem).toMatch(/beyond the head/);
    } finally {
      await withoutTrigger('delete', () => owner('audit_event').where({ id: fake }).delete());
    }
    expect((await auditor.get('/api/audit/verify')).body.ok).toBe(true);
  });

  it('a walk while events are being written is not a false alarm (the integrity sweep runs on a busy site)', async () => {
    // Writers append and move the head in one transaction; the walk checks up to the head it read.
    let writing = true;
    const writer = (async () => {
      let n = 0;
      while (writing && n < 200) {
        await seedEvents(1, () => ({
          actor: { id: null, name: 'chain test' },
          action: 'test.chain-busy',
          entityType: T,
        }));
        n++;
      }
      return n;
    })();
    const reports = [];
    for (let i = 0; i < 5; i++) reports.push(await verifyChain(db(), 500));
    writing = false;
    expect(await writer).toBeGreaterThan(0);
    for (const r of reports) expect(r.ok, JSON.stringify(r)).toBe(true);
  });
});
