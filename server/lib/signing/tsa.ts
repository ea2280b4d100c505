/**
 * Which time-stamping authority the site uses (docs/certificates.md, "Trusted time"): TSA_URL
 * and the PEM file of the roots it is trusted under (TSA_TRUST_FILE). Without TSA_URL, a
 * development or test server starts the local fake authority (fake-tsa.ts) on loopback; a
 * production server without TSA_URL cannot time-stamp and says so.
 */
import fs from 'node:fs';
import path from 'node:path';
import { repoRoot } from '../../../db/config';
import type { AppConfig } from '../config';
import type { TimeStamper } from './cms';
import { fakeTsaFiles, startFakeTsa } from './fake-tsa';
import { KEYS_DIR } from './keys';
import { requestTimeStamp, type TsaSettings } from './timestamp';

export type TsaConfig = Pick<AppConfig, 'tsaUrl' | 'tsaTrustFile' | 'devMode'>;

function pemBlocks(text: string): string[] {
  return text.match(/-----BEGIN CERTIFICATE-----[\s\S]+?-----END CERTIFICATE-----/g) ?? [];
}

/** The roots a time-stamp must chain to (read at every call: a changed trust file applies at once). */
export function tsaTrustedPem(cfg: TsaConfig): string[] {
  if (cfg.tsaTrustFile) return pemBlocks(fs.readFileSync(path.resolve(repoRoot, cfg.tsaTrustFile), 'utf8'));
  if (cfg.tsaUrl) return [];
  const fakeRoot = path.join(KEYS_DIR, 'fake-tsa', 'root.crt');
  return fs.existsSync(fakeRoot) ? pemBlocks(fs.readFileSync(fakeRoot, 'utf8')) : [];
}

export async function resolveTsa(cfg: TsaConfig): Promise<TsaSettings> {
  if (cfg.tsaUrl) return { url: cfg.tsaUrl, trustedPem: tsaTrustedPem(cfg) };
  if (!cfg.devMode)
    throw new Error('No time-stamping authority is configured (TSA_URL); signatures cannot be time-stamped.');
  const fake = await startFakeTsa();
  await fakeTsaFiles();
  return { url: fake.url, trustedPem: pemBlocks(fs.readFileSync(fake.files.caCert, 'utf8')) };
}

/** A time-stamper for signatures and checkpoints under the site's settings. */
export function timeStamperFor(cfg: TsaConfig): TimeStamper {
  return async (data) => requestTimeStamp(data, await resolveTsa(cfg));
}
