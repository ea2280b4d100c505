/**
 * A store for express-rate-limit kept in MariaDB (table sign_in_rate), so that the per-address
 * sign-in limit holds across every app server behind the proxy instead of per process. One
 * statement counts a hit and starts a new window when the old one has ended (MariaDB applies the
 * ON DUPLICATE KEY assignments left to right, so `hits` is decided against the old window end).
 * Rows of windows long past are removed now and then.
 */
import type { Knex } from 'knex';
import type { ClientRateLimitInfo, Options, Store } from 'express-rate-limit';

export class DbRateStore implements Store {
  localKeys = false;
  prefix: string;
  private windowMs = 60_000;

  constructor(
    private db: () => Knex,
    prefix = 'sign-in:',
  ) {
    this.prefix = prefix;
  }

  init(options: Options): void {
    this.windowMs = options.windowMs;
  }

  private key(k: string): string {
    return (this.prefix + k).slice(0, 100);
  }

  async get(key: string): Promise<ClientRateLimitInfo | undefined> {
    const row = await this.db()('sign_in_rate')
      .where({ client_key: this.key(key) })
      .first();
    if (!row || new Date(row.window_ends_at).getTime() <= Date.now()) return undefined;
    return { totalHits: Number(row.hits), resetTime: new Date(row.window_ends_at) };
  }

  async increment(key: string): Promise<ClientRateLimitInfo> {
    const k = this.key(key);
    const now = new Date();
    const end = new Date(now.getTime() + this.windowMs);
    await this.db().raw(
      `INSERT INTO sign_in_rate (client_key, hits, window_ends_at) VALUES (?, 1, ?)
       ON DUPLICATE KEY UPDATE
         hits = IF(window_ends_at <= ?, 1, hits + 1),
         window_ends_at = IF(window_ends_at <= ?, VALUES(window_ends_at), window_ends_at)`,
      [k, end, now, now],
    );
    const row = await this.db()('sign_in_rate').where({ client_key: k }).first();
    if (Math.random() < 0.01)
      await this.db()('sign_in_rate')
        .where('window_ends_at', '<', new Date(now.getTime() - 86_400_000))
        .delete();
    return { totalHits: Number(row?.hits ?? 1), resetTime: row ? new Date(row.window_ends_at) : end };
  }

  async decrement(key: string): Promise<void> {
    await this.db()('sign_in_rate')
      .where({ client_key: this.key(key) })
      .andWhere('hits', '>', 0)
      .decrement('hits', 1);
  }

  async resetKey(key: string): Promise<void> {
    await this.db()('sign_in_rate')
      .where({ client_key: this.key(key) })
      .delete();
  }
}
