/**
 * Machine tokens (issue 14 item 6): `dl_` + 32 base32 characters (20 random bytes, @oslojs), stored
 * only as their SHA-256 (a token has 160 bits of entropy, so a fast hash is safe; the same choice
 * as the session tokens, server/lib/sessions.ts). A request with `Authorization: Bearer dl_...`
 * is a machine request: the middleware finds the account, refuses a revoked or unknown token, and
 * audits every use.
 */
import crypto from 'node:crypto';
import { encodeBase32LowerCaseNoPadding } from '@oslojs/encoding';
import type { RequestHandler } from 'express';
import { auditNow } from '../../lib/audit';
import { getDb, parseJson } from '../../lib/db';
import type { MachineUser } from '../../lib/http';
import type { MachineScope } from './contract';

export type { MachineUser } from '../../lib/http';

export function newToken(): string {
  return `dl_${encodeBase32LowerCaseNoPadding(crypto.randomBytes(20))}`;
}

export function hashToken(token: string): string {
  return crypto.createHash('sha256').update(token).digest('hex');
}

export function machineTokenMiddleware(): RequestHandler {
  return async (req, res, next) => {
    try {
      const h = req.get('authorization');
      if (!h || !/^Bearer\s+/i.test(h)) return next();
      const token = h.replace(/^Bearer\s+/i, '').trim();
      // Only tokens in the machine-account form are ours to judge here; another bearer token (the
      // metrics scraper's) is left to the route it is sent to, and a machine route still refuses it.
      if (!token.startsWith('dl_')) return next();
      const db = getDb();
      const row = /^dl_[a-z2-7]{32}$/.test(token)
        ? await db('machine_account')
            .where({ token_hash: hashToken(token) })
            .first()
        : undefined;
      if (!row || row.revoked_at) {
        await auditNow(db, {
          actor: { id: null, name: row ? `machine account ${row.name}` : 'unknown machine token' },
          action: 'machine.token-refused',
          entityType: 'machine_account',
          entityId: row?.id ?? null,
          after: { method: req.method, path: req.path },
          reason: row ? 'token revoked' : 'unknown token',
          ip: req.ip ?? null,
        });
        res.status(401).json({
          error: {
            code: 'TOKEN_REFUSED',
            message: row
              ? 'This machine token was revoked. Ask the administrator for a new one.'
              : 'This machine token is not known.',
          },
        });
        return;
      }
      const machine: MachineUser = { id: row.id, name: row.name, scopes: parseJson<MachineScope[]>(row.scopes, []) };
      res.locals.machine = machine;
      await db('machine_account').where({ id: row.id }).update({ last_used_at: new Date() });
      await auditNow(db, {
        actor: { id: null, name: `machine account ${row.name}` },
        action: 'machine.api-call',
        entityType: 'machine_account',
        entityId: row.id,
        after: { method: req.method, path: req.path },
        ip: req.ip ?? null,
      });
      next();
    } catch (e) {
      next(e);
    }
  };
}
