/** The certificates module's settings: set by the router at app creation; callers from other modules need not pass them. */
import { loadConfig, type AppConfig } from '../../lib/config';
import type { SigningIdentity } from '../../lib/contract';
import { getSigningIdentity, signingSettingsFrom, tsaTrustedPem } from '../../lib/signing';

let registered: AppConfig | null = null;

export function setCertificateConfig(config: AppConfig): void {
  registered = config;
}

export function configOf(c?: AppConfig): AppConfig {
  return c ?? registered ?? loadConfig();
}

export function signingIdentity(config?: AppConfig): SigningIdentity {
  return getSigningIdentity(signingSettingsFrom(configOf(config)));
}

/** The roots of the time-stamping authorities this site trusts (docs/certificates.md, "Trusted time"). */
export function trustedTsaRoots(config?: AppConfig): string[] {
  return tsaTrustedPem(configOf(config));
}
