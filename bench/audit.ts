/**
 * Audit trail benchmark (issue 7): 1,000,000 events in a database of its own (drumline_bench),
 * then the browser's typical queries through the same service and repo functions the API uses,
 * each repeated with varied parameters; reports p50/p95 in ms (target: p95 < 200 ms). A text search
 * is measured per request (one window of events, see server/modules/audit/repo.ts) and, once, over
 * the whole trail.
 *
 *   npm run bench -- audit            # seeds once (about 2-4 min), reuses the seeded database later
 *   tsx bench/audit.ts --reseed       # drop, recreate, migrate and seed again
 *   AUDIT_BENCH_EVENTS=200000 tsx bench/audit.ts --reseed   # a smaller trail
 *
 * The events form one valid hash chain (server/modules/audit/bulk.ts hashes like appendAudit).
 * Data are invented: 60 accounts, three years of receipt, testing, signing and sign-in events.
 */
import knexFactory, { type Knex } from 'knex';
import { dbSettings, knexConfig } from '../db/config';
import { migrateDatabase, recreateDatabase } from '../db/migrate';
import { bulkAppendAudit, type BulkEvent } from '../server/modules/audit/bulk';
import * as repo from '../server/modules/audit/repo';
import * as service from '../server/modules/audit/service';
import type { AuthUser } from '../server/lib/http';
import { must } from '../server/lib/db';
import type { AuditListQuery } from '../server/modules/audit/contract';

const DB_NAME = process.env.AUDIT_BENCH_DB ?? 'drumline_bench';
const EVENTS = Number(process.env.AUDIT_BENCH_EVENTS ?? 1_000_000);
const RUNS = Number(process.env.AUDIT_BENCH_RUNS ?? 30);
const TARGET_P95_MS = 200;
const USERS = 60;
const SPAN_MS = 3 * 365 * 86_400_000;

/** Deterministic PRNG (mulberry32), so every seeding gives the same trail. */
function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

// action, record type, weight, how many distinct records of that type
const KINDS: [string, string, number, number][] = [
  ['auth.signed-in', 'user', 18, USERS],
  ['auth.signed-out', 'user', 14, USERS],
  ['auth.sign-in-failed', 'user', 2, USERS],
  ['measurement.recorded', 'measurement', 20, 400_000],
  ['container.registered', 'container', 7, 300_000],
  ['lot.registered', 'lot', 3, 30_000],
  ['lot.released', 'lot', 2, 30_000],
  ['test.performed', 'identity_test', 3, 35_000],
  ['test.verified', 'identity_test', 3, 35_000],
  ['test.returned', 'identity_test', 0.4, 35_000],
  ['signature.signed', 'identity_test', 8, 35_000],
  ['certificate.issued', 'certificate', 2, 30_000],
  ['instrument.check-recorded', 'instrument', 2, 12],
  ['reference.created', 'reference_spectrum', 0.5, 2_000],
  ['reference.approved', 'reference_spectrum', 0.3, 2_000],
  ['identity_method.changed', 'identity_method', 0.2, 300],
  ['material.created', 'material', 0.1, 400],
  ['investigation.opened', 'investigation', 0.2, 1_500],
  ['user.roles-changed', 'user', 0.05, USERS],
  ['audit.exported', 'audit_trail', 0.05, 1],
];
const REASONS = [
  're-measured after poor ATR contact',
  'label reprinted, first label damaged',
  'supplier lot number corrected (typing error)',
  'crystal cleaned and background repeated',
  'retest authorised by QA after laboratory check',
  'drift corrected after instrument check',
  'container count corrected against the delivery note',
  'method range tightened after specificity review',
  'returned to operator: wrong reference set chosen',
  'spillage on the crystal, measurement repeated',
];

function makeGenerator(total: number): (i: number) => BulkEvent {
  const rnd = prng(20260314);
  const weights = KINDS.map((k) => k[2]);
  const sum = weights.reduce((a, b) => a + b, 0);
  const cumulative = weights.map((_, i) => weights.slice(0, i + 1).reduce((a, b) => a + b, 0) / sum);
  const start = Date.now() - SPAN_MS;
  const step = SPAN_MS / total;
  return (i) => {
    const r = rnd();
    const k = KINDS[cumulative.findIndex((c) => r <= c)] ?? KINDS[0];
    const actorId = 1 + Math.floor(rnd() * USERS);
    const entityId = k[1] === 'user' ? actorId : 1 + Math.floor(rnd() * k[3]);
    const withReason = rnd() < 0.25;
    const reason = withReason
      ? `${REASONS[Math.floor(rnd() * REASONS.length)]} (${1 + Math.floor(rnd() * 9999)})`
      : null;
    const changed = rnd() < 0.3;
    return {
      occurredAt: new Date(start + Math.floor(i * step + rnd() * step * 0.5)),
      actor: { id: actorId, name: `Bench User ${actorId}` },
      action: k[0],
      entityType: k[1],
      entityId,
      before: changed ? { status: 'quarantine', count: Math.floor(rnd() * 40) } : null,
      after: {
        status: changed ? 'released' : 'recorded',
        count: Math.floor(rnd() * 40),
        score: Math.round(rnd() * 10_000) / 10_000,
      },
      reason,
      ip: `10.0.${Math.floor(rnd() * 4)}.${1 + Math.floor(rnd() * 250)}`,
    };
  };
}

async function seed(db: Knex, owner: Knex): Promise<void> {
  const t0 = performance.now();
  const now = new Date();
  const users = Array.from({ length: USERS }, (_, i) => ({
    id: i + 1,
    username: `bench${i + 1}`,
    full_name: `Bench User ${i + 1}`,
    email: `bench${i + 1}@bench.example`,
    password_hash: 'x',
    roles: '[]', // roles come from role grants; the audit benchmark needs only the actors
    must_change_password: 0,
    failed_attempts: 0,
    active: 1,
    created_at: now,
    updated_at: now,
  }));
  await db('app_user').insert(users);
  const make = makeGenerator(EVENTS);
  let lastReport = 0;
  await bulkAppendAudit(db, EVENTS, make, {
    batchSize: 2000,
    chunkSize: 50_000,
    onProgress: (done) => {
      if (done - lastReport >= 100_000 || done === EVENTS) {
        lastReport = done;
        process.stdout.write(
          `  seeded ${done.toLocaleString('en-GB')} events (${((performance.now() - t0) / 1000).toFixed(0)} s)\n`,
        );
      }
    },
  });
  await owner.raw('ANALYZE TABLE audit_event');
  console.log(`  seeding took ${((performance.now() - t0) / 1000).toFixed(1)} s`);
}

function percentile(sorted: number[], p: number): number {
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
  return sorted[i];
}

interface Result {
  name: string;
  p50: number;
  p95: number;
  max: number;
  rows: number;
}

async function measure(name: string, runs: number, fn: (i: number) => Promise<number>): Promise<Result> {
  await fn(0); // warm-up (plans, buffer pool)
  const times: number[] = [];
  let rows = 0;
  for (let i = 0; i < runs; i++) {
    const t = performance.now();
    rows += await fn(i + 1);
    times.push(performance.now() - t);
  }
  times.sort((a, b) => a - b);
  return {
    name,
    p50: percentile(times, 50),
    p95: percentile(times, 95),
    max: times[times.length - 1],
    rows: Math.round(rows / runs),
  };
}

export async function runAuditBench(
  args: string[] = process.argv.slice(2),
): Promise<{ results: Result[]; ok: boolean }> {
  const reseed = args.includes('--reseed');
  const ownerCfg = knexConfig(dbSettings('owner', DB_NAME), { min: 0, max: 2 });
  let needSeed = reseed;
  if (!needSeed) {
    const probe = knexFactory(knexConfig({ ...dbSettings('owner', DB_NAME), database: '' }, { min: 0, max: 1 }));
    try {
      const [rows] = await probe.raw(
        'SELECT COUNT(*) AS n FROM information_schema.tables WHERE table_schema = ? AND table_name = ?',
        [DB_NAME, 'audit_head'],
      );
      if (Number(rows[0].n) === 0) needSeed = true;
      else {
        const [h] = await probe.raw(`SELECT last_id FROM \`${DB_NAME}\`.audit_head WHERE id = 1`);
        if (Number(h[0]?.last_id ?? 0) !== EVENTS) needSeed = true;
      }
    } finally {
      await probe.destroy();
    }
  }
  if (needSeed) {
    console.log(`[bench audit] creating ${DB_NAME} and seeding ${EVENTS.toLocaleString('en-GB')} events`);
    await recreateDatabase(DB_NAME);
  }
  await migrateDatabase(DB_NAME); // also applies 007 to an older seeded database
  const db = knexFactory(knexConfig(dbSettings('runtime', DB_NAME), { min: 0, max: 4 }));
  const owner = knexFactory(ownerCfg);
  try {
    if (needSeed) await seed(db, owner);
    else
      console.log(
        `[bench audit] reusing ${DB_NAME} with ${EVENTS.toLocaleString('en-GB')} events (--reseed to rebuild)`,
      );

    const auditor: AuthUser = {
      id: 1,
      username: 'bench1',
      fullName: 'Bench User 1',
      email: '',
      roles: ['auditor'],
      mustChangePassword: false,
      sessionId: '',
      signedOnce: false,
    };
    const admin: AuthUser = { ...auditor, roles: ['admin'] };
    const bounds = await db('audit_event').min({ lo: 'occurred_at' }).max({ hi: 'occurred_at' }).first();
    const lo = new Date(bounds!.lo).getTime();
    const hi = new Date(bounds!.hi).getTime();
    const rnd = prng(7);
    const at = (f: number) => new Date(lo + f * (hi - lo));
    const month = () => {
      const s = at(rnd() * 0.95);
      return { from: s.toISOString(), to: new Date(s.getTime() + 30 * 86_400_000).toISOString() };
    };
    const day = () => {
      const s = at(rnd() * 0.99);
      return { from: s.toISOString(), to: new Date(s.getTime() + 86_400_000).toISOString() };
    };
    const user = () => 1 + Math.floor(rnd() * USERS);
    const list = async (u: AuthUser, q: Partial<AuditListQuery>) =>
      (await service.listEvents(db, u, { sort: 'desc', limit: 50, ...q } as AuditListQuery)).events.length;
    const deepCursor = async (f: Partial<AuditListQuery>) => {
      // a cursor half-way into the matching events: the keyset makes page 10,000 cost what page 1 costs
      const id = Math.floor(EVENTS * (0.3 + rnd() * 0.4));
      // the bench wrote EVENTS gap-free events, so every id up to EVENTS exists
      const found = await db('audit_event').select('occurred_at', 'id').where('id', id).first();
      const row = must(found, `Audit event ${id}`);
      return { ...f, cursor: repo.encodeCursor({ t: new Date(row.occurred_at).getTime(), id: row.id }) };
    };
    const actionsFor = (prefix: string) => KINDS.filter((k) => k[0].startsWith(prefix)).map((k) => k[0]);
    /** the record id of a random existing event of that type (so that the record has a history) */
    const existingId = async (type: string) => {
      const row = await db('audit_event')
        .select('entity_id')
        .where('entity_type', type)
        .andWhere('id', '>=', 1 + Math.floor(rnd() * EVENTS * 0.95))
        .orderBy('id')
        .first();
      return String(row?.entity_id ?? '1');
    };

    const results: Result[] = [];
    const add = async (name: string, fn: (i: number) => Promise<number>) => {
      const r = await measure(name, RUNS, fn);
      results.push(r);
      console.log(
        `  ${r.p95 < TARGET_P95_MS ? 'ok  ' : 'SLOW'} ${name.padEnd(52)} p50 ${r.p50.toFixed(1).padStart(7)} ms   p95 ${r.p95.toFixed(1).padStart(7)} ms   (${r.rows} rows)`,
      );
    };
    console.log(`[bench audit] ${RUNS} runs per query, page size 50, first pages include the capped count`);
    await add('all events, page 1 (newest first)', () => list(auditor, {}));
    await add('all events, page 1 (oldest first)', () => list(auditor, { sort: 'asc' }));
    await add('date range: one month, page 1', () => list(auditor, month()));
    await add('date range: one day, page 1', () => list(auditor, day()));
    await add('user, page 1', () => list(auditor, { actorId: user() }));
    await add('user + one month, page 1', () => list(auditor, { actorId: user(), ...month() }));
    await add('action exact (random), page 1', () =>
      list(auditor, { action: KINDS[Math.floor(rnd() * KINDS.length)][0] }),
    );
    await add('action prefix (auth.* / test.* / lot.*), page 1', (i) =>
      list(auditor, { action: `${['auth', 'test', 'lot'][i % 3]}.*` }),
    );
    await add('action exact + one month, page 1', () => list(auditor, { action: 'lot.released', ...month() }));
    await add('record type only (certificate), page 1', () => list(auditor, { entityType: 'certificate' }));
    await add('record type + id (one lot), page 1', async () =>
      list(auditor, { entityType: 'lot', entityId: await existingId('lot') }),
    );
    await add(
      'record history (one container, all events)',
      async () => (await repo.eventsOfRecord(db, 'container', await existingId('container'), 1000)).length,
    );
    await add('reason text, common words ("ATR contact"), one request', () => list(auditor, { q: 'ATR contact' }));
    await add('reason text, rare phrase, one request (one window)', (i) =>
      list(auditor, { q: `measurement repeated (${4000 + i})` }),
    );
    await add('reason text + user, one request', () => list(auditor, { q: 'corrected', actorId: user() }));
    await add('reason text + one month, one request', () => list(auditor, { q: 'typing error', ...month() }));
    await add('deep page (cursor half-way), no filter', async () => list(auditor, await deepCursor({})));
    await add('deep page (cursor half-way), user', async () => list(auditor, await deepCursor({ actorId: user() })));
    await add('deep page (cursor half-way), action prefix test.*', async () =>
      list(auditor, await deepCursor({ action: 'test.*' })),
    );
    await add('administrator view (account events), page 1', () => list(admin, {}));
    await add('filter choices (distinct actions, types, users)', async () => {
      const f = await repo.facets(db);
      return f.actions.length;
    });
    console.log(`  (actions seen: ${actionsFor('').length}; target p95 < ${TARGET_P95_MS} ms)`);

    // A rare text over the whole trail: the client follows the cursor window by window.
    {
      const t1 = performance.now();
      let cursor: string | null = null;
      let requests = 0;
      let found = 0;
      do {
        const page: Awaited<ReturnType<typeof service.listEvents>> = await service.listEvents(db, auditor, {
          sort: 'desc',
          limit: 50,
          q: 'measurement repeated (4242)',
          ...(cursor ? { cursor } : {}),
        } as AuditListQuery);
        found += page.events.length;
        cursor = page.nextCursor;
        requests++;
      } while (cursor && found < 50);
      console.log(
        `  rare text over the whole trail: ${requests} requests, ${found} found, ${(performance.now() - t1).toFixed(0)} ms in all (each request is one bounded window)`,
      );
    }

    // Export throughput: the CSV path's page iterator over a large selection.
    const t0 = performance.now();
    let n = 0;
    for await (const page of service.eventPages(db, { sort: 'desc', action: 'auth.*' }, { scope: 'all' }, 1000)) {
      n += page.length;
      if (n >= 100_000) break;
    }
    const s = (performance.now() - t0) / 1000;
    console.log(
      `  export pages: ${n.toLocaleString('en-GB')} events read in ${s.toFixed(1)} s (${Math.round(n / s).toLocaleString('en-GB')} events/s)`,
    );
    const ok = results.every((r) => r.p95 < TARGET_P95_MS);
    console.log(
      ok ? '[bench audit] all queries meet the p95 target' : '[bench audit] SOME QUERIES MISS the p95 target',
    );
    return { results, ok };
  } finally {
    await db.destroy();
    await owner.destroy();
  }
}

const isMain = process.argv[1] && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/').split('/').pop()!);
if (isMain) {
  runAuditBench()
    .then(({ ok }) => process.exit(ok ? 0 : 1))
    .catch((e) => {
      console.error('[bench audit] failed:', e);
      process.exit(2);
    });
}
