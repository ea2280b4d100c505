/** Application settings from the environment, with development defaults. */
function num(name: string, dflt: number): number {
  const v = process.env[name];
  if (v === undefined || v === '') return dflt;
  const n = Number(v);
  if (!Number.isFinite(n)) throw new Error(`${name} must be a number, got "${v}"`);
  return n;
}

export interface AppConfig {
  port: number;
  publicUrl: string;
  siteName: string;
  siteAddress: string;
  siteTimeZone: string;
  sessionIdleMinutes: number;
  sessionMaxHours: number;
  lockoutAttempts: number;
  lockoutMinutes: number;
  /** days after which a password must be changed at the next sign-in; 0 = never */
  passwordMaxAgeDays: number;
  signInRateLimit: number; // attempts per IP per window
  signInRateWindowMinutes: number;
  uploadMaxBytes: number;
  /** hours between scheduled integrity sweeps (docs/compliance.md); 0 = only when asked for */
  integritySweepHours: number;
  /** months between periodic audit-trail reviews (docs/trending.md); the work queue says when one is due */
  auditReviewMonths: number;
  allowedOrigins: string[];
  /**
   * Addresses (or CIDR ranges) of the reverse proxies whose X-Forwarded-For header is believed
   * (TRUSTED_PROXIES, comma-separated; default none). Only a request that arrives from one of
   * them gets its client address from that header; every other request is known by the address
   * it came from, so a client cannot forge its address in the audit trail or dodge the sign-in limit.
   */
  trustedProxies: string[];
  /** invalid measurements on one container after which it is blocked until QA decides (MAX_INVALID_MEASUREMENTS, default 3) */
  maxInvalidMeasurements: number;
  /** released lots whose retest date is this many days away (or past) are listed in QA's work queue */
  retestNoticeDays: number;
  /** a file whose title or sample identifier names another record: 'confirm' by the operator or 'refuse' (FILE_IDENTIFIER_POLICY) */
  fileIdentifierPolicy: 'confirm' | 'refuse';
  devMode: boolean;
  /** Bearer token of the metrics scraper (METRICS_TOKEN, at least 24 characters); unset = administrators only. */
  metricsToken?: string;
  /** How long a stopping server waits for requests in flight before it exits (SHUTDOWN_GRACE_MS). */
  shutdownGraceMs: number;
  smtp: { host: string; port: number; user?: string; password?: string; secure: boolean; from: string } | null;
  signingP12Path?: string;
  signingP12Passphrase?: string;
  /** RFC 3161 time-stamping authority (TSA_URL); without it a development server runs a local fake one. */
  tsaUrl?: string;
  /** PEM file with the roots the authority's certificates chain to (TSA_TRUST_FILE). */
  tsaTrustFile?: string;
  /** Key of the audit chain's HMAC (AUDIT_CHAIN_KEY, hex; else the file AUDIT_CHAIN_KEY_FILE, default .keys/audit-chain.key). */
  auditChainKeyFile?: string;
  /** Folder where signed audit checkpoints are written (AUDIT_CHECKPOINT_DIR, default .data/checkpoints). */
  auditCheckpointDir: string;
  /** Minutes between audit checkpoints (AUDIT_CHECKPOINT_MINUTES, default 60; 0 = only when asked). */
  auditCheckpointMinutes: number;
  /** Minutes between retries of certificates that could not be issued (CERTIFICATE_RETRY_MINUTES, default 5). */
  certificateRetryMinutes: number;
  /** Folder under which every instrument's export folder lies (INSTRUMENT_EXPORT_ROOT, default .data/instrument-exports; docs/instrument-intake.md). */
  instrumentExportRoot: string;
  /** Milliseconds a new file's size must stay unchanged before it is taken (INTAKE_STABLE_MS, default 2000). */
  intakeStableMs: number;
  /** Milliseconds between the watcher's lease ticks and polls of mounted shares (INTAKE_POLL_MS, default 2000). */
  intakePollMs: number;
  /** Hours after which an unassigned acquisition is listed for QA (UNASSIGNED_ACQUISITION_HOURS, default 24). */
  unassignedAcquisitionHours: number;
  /** Minutes of clock offset (file's stated acquisition time vs receipt) beyond which the verifier is warned; also the "in the future" tolerance (CLOCK_TOLERANCE_MINUTES, default 5). */
  clockToleranceMinutes: number;
}

export function loadConfig(overrides: Partial<AppConfig> = {}): AppConfig {
  const port = num('PORT', 8080);
  const smtpHost = process.env.SMTP_HOST;
  const base: AppConfig = {
    port,
    publicUrl: process.env.PUBLIC_URL ?? `http://127.0.0.1:${port}`,
    siteName: process.env.SITE_NAME ?? 'Drumline demo site',
    siteAddress: process.env.SITE_ADDRESS ?? '',
    siteTimeZone: process.env.SITE_TIMEZONE ?? 'Europe/Berlin',
    sessionIdleMinutes: num('SESSION_IDLE_MINUTES', 30),
    sessionMaxHours: num('SESSION_MAX_HOURS', 12),
    lockoutAttempts: num('LOCKOUT_ATTEMPTS', 5),
    lockoutMinutes: num('LOCKOUT_MINUTES', 15),
    passwordMaxAgeDays: num('PASSWORD_MAX_AGE_DAYS', 90),
    signInRateLimit: num('SIGNIN_RATE_LIMIT', 30),
    signInRateWindowMinutes: num('SIGNIN_RATE_WINDOW_MINUTES', 5),
    uploadMaxBytes: num('UPLOAD_MAX_MB', 20) * 1024 * 1024,
    integritySweepHours: num('INTEGRITY_SWEEP_HOURS', 24),
    auditReviewMonths: num('AUDIT_REVIEW_MONTHS', 1),
    allowedOrigins: (process.env.ALLOWED_ORIGINS ?? '')
      .split(',')
      .map((s) => s.trim())
      .filter(Boolean),
    trustedProxies: (process.env.TRUSTED_PROXIES ?? '')
      .split(',')
      .map((s) => s.trim())
      .filter(Boolean),
    maxInvalidMeasurements: Math.max(1, Math.floor(num('MAX_INVALID_MEASUREMENTS', 3))),
    retestNoticeDays: Math.max(0, Math.floor(num('RETEST_NOTICE_DAYS', 30))),
    fileIdentifierPolicy: process.env.FILE_IDENTIFIER_POLICY === 'refuse' ? 'refuse' : 'confirm',
    devMode: process.env.NODE_ENV !== 'production',
    metricsToken: process.env.METRICS_TOKEN || undefined,
    shutdownGraceMs: num('SHUTDOWN_GRACE_MS', 10_000),
    smtp: smtpHost
      ? {
          host: smtpHost,
          port: num('SMTP_PORT', 587),
          user: process.env.SMTP_USER,
          password: process.env.SMTP_PASSWORD,
          secure: process.env.SMTP_SECURE === 'true',
          from: process.env.MAIL_FROM ?? 'drumline@localhost',
        }
      : null,
    signingP12Path: process.env.SIGNING_P12_PATH,
    signingP12Passphrase: process.env.SIGNING_P12_PASSPHRASE,
    tsaUrl: process.env.TSA_URL || undefined,
    tsaTrustFile: process.env.TSA_TRUST_FILE || undefined,
    auditChainKeyFile: process.env.AUDIT_CHAIN_KEY_FILE || undefined,
    auditCheckpointDir: process.env.AUDIT_CHECKPOINT_DIR ?? '.data/checkpoints',
    auditCheckpointMinutes: num('AUDIT_CHECKPOINT_MINUTES', 60),
    certificateRetryMinutes: num('CERTIFICATE_RETRY_MINUTES', 5),
    instrumentExportRoot: process.env.INSTRUMENT_EXPORT_ROOT ?? '.data/instrument-exports',
    intakeStableMs: num('INTAKE_STABLE_MS', 2000),
    intakePollMs: num('INTAKE_POLL_MS', 2000),
    unassignedAcquisitionHours: num('UNASSIGNED_ACQUISITION_HOURS', 24),
    clockToleranceMinutes: num('CLOCK_TOLERANCE_MINUTES', 5),
  };
  const out = { ...base, ...overrides };
  if (out.metricsToken !== undefined && out.metricsToken.length < 24)
    throw new Error('METRICS_TOKEN must be at least 24 characters long (a random secret), or unset');
  return out;
}
