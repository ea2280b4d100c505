/** Shared helpers of the API tests: the app on the test database, accounts, signing in. */
import request from 'supertest';
import type { Express } from 'express';
import knexFactory, { type Knex } from 'knex';
import { createApp } from '../../server/app';
import { getDb } from '../../server/lib/db';
import { hashPassword } from '../../server/lib/passwords';
import type { Role } from '../../server/lib/contract';
import { dbSettings, knexConfig } from '../../db/config';
import { createSiteAccounts } from '../../db/site-accounts';
import { TEST_DB } from './db-name';

export const PASSWORD = 'correct-horse-battery-1';

let cached: Express | null = null;
export function testApp(): Express {
  if (!cached)
    cached = createApp({
      database: TEST_DB,
      config: { signInRateLimit: 10_000, publicUrl: 'http://127.0.0.1:8080' },
    }).app;
  return cached;
}

export function db(): Knex {
  testApp();
  return getDb();
}

/** A privileged connection (the owner account) for simulating tampering behind the app's back. */
export function ownerDb(): Knex {
  return knexFactory(knexConfig(dbSettings('owner', TEST_DB), { min: 0, max: 2 }));
}

export { untyped } from './untyped';

let counter = 0;
export function uniqueName(prefix: string): string {
  counter++;
  return `${prefix}${Date.now().toString(36)}${counter}`.toLowerCase().slice(0, 60);
}

let fixtureOwner: Knex | null = null;
/**
 * Test accounts get their roles the way a site's first accounts do: through the site-setup path
 * of the owner account (db/site-accounts.ts), the one path that needs no second administrator.
 * The runtime account cannot give roles that way (tests/api/segregation.test.ts).
 */
export async function makeUser(
  roles: Role[],
  opts: { mustChange?: boolean; password?: string; username?: string } = {},
) {
  testApp();
  const username = opts.username ?? uniqueName(roles[0].replace('_', ''));
  const hash = await hashPassword(opts.password ?? PASSWORD);
  fixtureOwner ??= ownerDb();
  const ids = await createSiteAccounts(
    fixtureOwner,
    [{ username, fullName: `Test ${username}`, email: `${username}@test.example`, roles }],
    { passwordHash: () => hash, mustChangePassword: !!opts.mustChange, reason: 'test account', audit: false },
  );
  return { id: ids.get(username)!, username, fullName: `Test ${username}`, password: opts.password ?? PASSWORD };
}

/** A supertest agent signed in as a new user with the given roles. */
export async function agentFor(roles: Role[]) {
  const u = await makeUser(roles);
  const agent = request.agent(testApp());
  const res = await agent.post('/api/auth/sign-in').send({ username: u.username, password: u.password });
  if (res.status !== 200) throw new Error(`sign-in failed: ${res.status} ${JSON.stringify(res.body)}`);
  return { agent, user: u };
}

/** Signature credentials for the first signing of a session (user name + password). */
export function sig(u: { username: string; password: string }) {
  return { username: u.username, password: u.password };
}

/** supertest parser that keeps a binary body (PDF, zip) as one Buffer: `.buffer(true).parse(binaryBody)`. */
export function binaryBody(res: request.Response, cb: (err: Error | null, body: Buffer) => void): void {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
}
