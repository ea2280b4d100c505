/**
 * The key of the audit chain's HMAC (docs/compliance.md, "Audit chain anchored outside the
 * database"): held outside MariaDB, so that an account that can rewrite audit rows (the owner)
 * still cannot compute the hashes that make a rewritten chain look intact.
 * Source, first match: AUDIT_CHAIN_KEY (hex, at least 32 bytes), the file AUDIT_CHAIN_KEY_FILE,
 * or .keys/audit-chain.key in the ignored key folder, generated at first use (32 random bytes,
 * hex, mode 0600, created exclusively so two processes starting together agree on one key).
 * Only the key's id (an HMAC of a fixed label, never the key) is stored in the database.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { repoRoot } from '../../db/config';

export interface AuditKey {
  key: Buffer;
  /** 16 hex digits naming the key (stored with the chain; reveals nothing about the key). */
  keyId: string;
  source: 'environment' | 'file' | 'generated';
}

let cached: { spec: string; key: AuditKey } | null = null;

function fromHex(hex: string, where: string): Buffer {
  const k = Buffer.from(hex.trim(), 'hex');
  if (k.length < 32 || k.toString('hex') !== hex.trim().toLowerCase())
    throw new Error(`${where} must hold at least 32 bytes as hexadecimal digits.`);
  return k;
}

export function keyIdOf(key: Buffer): string {
  return crypto.createHmac('sha256', key).update('drumline audit chain key id').digest('hex').slice(0, 16);
}

/** The audit chain key of this server (read once per setting). */
export function auditKey(): AuditKey {
  const env = process.env.AUDIT_CHAIN_KEY ?? '';
  const file = path.resolve(repoRoot, process.env.AUDIT_CHAIN_KEY_FILE || path.join('.keys', 'audit-chain.key'));
  const spec = `${env ? 'env' : ''}|${file}`;
  if (cached?.spec === spec) return cached.key;
  let key: Buffer;
  let source: AuditKey['source'];
  if (env) {
    key = fromHex(env, 'AUDIT_CHAIN_KEY');
    source = 'environment';
  } else if (fs.existsSync(file)) {
    key = fromHex(fs.readFileSync(file, 'utf8'), file);
    source = 'file';
  } else {
    if (process.env.AUDIT_CHAIN_KEY_FILE)
      throw new Error(`AUDIT_CHAIN_KEY_FILE points to ${process.env.AUDIT_CHAIN_KEY_FILE}, which does not exist.`);
    fs.mkdirSync(path.dirname(file), { recursive: true, mode: 0o700 });
    try {
      fs.writeFileSync(file, crypto.randomBytes(32).toString('hex') + '\n', { flag: 'wx', mode: 0o600 });
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
    }
    // the winner's key (this process's or another's written a moment earlier)
    let text = '';
    for (let i = 0; i < 50 && text.trim().length < 64; i++) {
      text = fs.readFileSync(file, 'utf8');
      if (text.trim().length < 64) Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 20);
    }
    key = fromHex(text, file);
    source = 'generated';
  }
  const k: AuditKey = { key, keyId: keyIdOf(key), source };
  cached = { spec, key: k };
  return k;
}
