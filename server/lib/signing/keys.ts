/**
 * The site's signing identity: a PKCS#12 file configured with SIGNING_P12_PATH /
 * SIGNING_P12_PASSPHRASE, or, when none is configured, a self-signed RSA-2048 certificate
 * generated at first use into the ignored folder .keys/ (signing.p12 plus signing.passphrase,
 * both mode 0600). Its SHA-256 fingerprint is shown to administrators and printed with every
 * verification, so a reader can tell which key signed a certificate.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import forge from 'node-forge';
import { repoRoot } from '../../../db/config';
import type { AppConfig } from '../config';
import type { SigningIdentity } from '../contract';
import { asn1, dnString, sha256 } from './der';

export const KEYS_DIR = path.join(repoRoot, '.keys');
const P12_FILE = 'signing.p12';
const PASS_FILE = 'signing.passphrase';

export interface SigningMaterial {
  key: crypto.KeyObject;
  cert: forge.pki.Certificate;
  certDer: Buffer;
  /** Further certificates from the PKCS#12 (issuing CAs), embedded for the reader. */
  chainDer: Buffer[];
  fingerprint: string;
  source: 'configured' | 'generated';
  p12Path: string;
}

let cached: { key: string; material: SigningMaterial } | null = null;

export function certDerOf(cert: forge.pki.Certificate): Buffer {
  return Buffer.from(asn1.toDer(forge.pki.certificateToAsn1(cert)).getBytes(), 'binary');
}

/** Reads a PKCS#12 file: the private key and the certificate whose public key matches it. */
export function readP12(
  p12: Buffer,
  passphrase: string,
): { key: crypto.KeyObject; cert: forge.pki.Certificate; chain: forge.pki.Certificate[] } {
  let parsed: forge.pkcs12.Pkcs12Pfx;
  try {
    parsed = forge.pkcs12.pkcs12FromAsn1(
      asn1.fromDer(forge.util.createBuffer(p12.toString('binary'))),
      false,
      passphrase,
    );
  } catch (e) {
    throw new Error(
      `The signing certificate file cannot be opened (wrong passphrase or not a PKCS#12 file): ${(e as Error).message}`,
      { cause: e },
    );
  }
  const keyBags = [
    ...(parsed.getBags({ bagType: forge.pki.oids.pkcs8ShroudedKeyBag })[forge.pki.oids.pkcs8ShroudedKeyBag] ?? []),
    ...(parsed.getBags({ bagType: forge.pki.oids.keyBag })[forge.pki.oids.keyBag] ?? []),
  ];
  const forgeKey = keyBags.find((b) => b.key)?.key as forge.pki.rsa.PrivateKey | undefined;
  if (!forgeKey) throw new Error('The signing certificate file holds no RSA private key.');
  const certs = (parsed.getBags({ bagType: forge.pki.oids.certBag })[forge.pki.oids.certBag] ?? [])
    .map((b) => b.cert)
    .filter((c): c is forge.pki.Certificate => !!c);
  const cert = certs.find((c) => {
    const pk = c.publicKey as forge.pki.rsa.PublicKey;
    return pk.n?.compareTo(forgeKey.n) === 0 && pk.e?.compareTo(forgeKey.e) === 0;
  });
  if (!cert) throw new Error('The signing certificate file holds no certificate matching its private key.');
  const key = crypto.createPrivateKey(forge.pki.privateKeyToPem(forgeKey));
  return { key, cert, chain: certs.filter((c) => c !== cert) };
}

/** Makes a self-signed signing certificate (RSA 2048, SHA-256, digitalSignature + nonRepudiation) as PKCS#12. */
export function generateSigningP12(commonName: string, passphrase: string, years = 10): Buffer {
  const { privateKey, publicKey } = crypto.generateKeyPairSync('rsa', { modulusLength: 2048, publicExponent: 0x10001 });
  const fKey = forge.pki.privateKeyFromPem(privateKey.export({ type: 'pkcs1', format: 'pem' }).toString());
  const fPub = forge.pki.publicKeyFromPem(publicKey.export({ type: 'spki', format: 'pem' }).toString());
  const cert = forge.pki.createCertificate();
  cert.publicKey = fPub;
  // Positive serial number of 16 random bytes (RFC 5280 4.1.2.2).
  const serial = crypto.randomBytes(16);
  serial[0] &= 0x7f;
  cert.serialNumber = serial.toString('hex');
  const now = new Date();
  cert.validity.notBefore = new Date(now.getTime() - 60_000);
  cert.validity.notAfter = new Date(now.getTime());
  cert.validity.notAfter.setUTCFullYear(now.getUTCFullYear() + years);
  const subject = [
    { shortName: 'O', value: 'Drumline' },
    { shortName: 'CN', value: commonName.slice(0, 64) },
  ];
  cert.setSubject(subject);
  cert.setIssuer(subject);
  cert.setExtensions([
    { name: 'basicConstraints', cA: false, critical: true },
    { name: 'keyUsage', digitalSignature: true, nonRepudiation: true, critical: true },
    { name: 'subjectKeyIdentifier' },
  ]);
  cert.sign(fKey, forge.md.sha256.create());
  const p12 = forge.pkcs12.toPkcs12Asn1(fKey, [cert], passphrase, {
    algorithm: '3des',
    friendlyName: commonName.slice(0, 64),
  });
  return Buffer.from(asn1.toDer(p12).getBytes(), 'binary');
}

function sleepSync(ms: number): void {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

/**
 * The generated identity in .keys/. The passphrase file is created exclusively ('wx') first, so
 * two processes starting together never produce two keys: the loser waits for the winner's p12.
 */
function loadOrCreateGenerated(siteName: string, dir: string): { p12: Buffer; passphrase: string; p12Path: string } {
  const p12Path = path.join(dir, P12_FILE);
  const passPath = path.join(dir, PASS_FILE);
  fs.mkdirSync(dir, { recursive: true, mode: 0o700 });
  if (!fs.existsSync(p12Path)) {
    const passphrase = crypto.randomBytes(24).toString('base64url');
    let mine = false;
    try {
      fs.writeFileSync(passPath, passphrase + '\n', { flag: 'wx', mode: 0o600 });
      mine = true;
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
    }
    if (mine) {
      const p12 = generateSigningP12(`${siteName} identity certificates`, passphrase);
      const tmp = `${p12Path}.${process.pid}.tmp`;
      fs.writeFileSync(tmp, p12, { mode: 0o600 });
      fs.renameSync(tmp, p12Path);
    } else {
      for (let i = 0; i < 100 && !fs.existsSync(p12Path); i++) sleepSync(100);
      if (!fs.existsSync(p12Path))
        throw new Error(
          `${path.relative(repoRoot, passPath)} exists without ${P12_FILE}; remove it to generate a new signing certificate.`,
        );
    }
  }
  if (!fs.existsSync(passPath))
    throw new Error(`${path.relative(repoRoot, p12Path)} exists but its passphrase file ${PASS_FILE} is missing.`);
  return { p12: fs.readFileSync(p12Path), passphrase: fs.readFileSync(passPath, 'utf8').trim(), p12Path };
}

export interface SigningSettings {
  siteName: string;
  signingP12Path?: string;
  signingP12Passphrase?: string;
  /** Folder for a generated identity (tests may point elsewhere); default .keys/ in the repository. */
  keysDir?: string;
}

/** Loads (once per settings) the signing key and certificate. */
export function loadSigningMaterial(s: SigningSettings): SigningMaterial {
  const cacheKey = JSON.stringify([
    s.signingP12Path ?? '',
    s.signingP12Passphrase ?? '',
    s.keysDir ?? '',
    s.signingP12Path ? '' : s.siteName,
  ]);
  if (cached && cached.key === cacheKey) return cached.material;
  let p12: Buffer;
  let passphrase: string;
  let p12Path: string;
  let source: SigningMaterial['source'];
  if (s.signingP12Path) {
    p12Path = path.resolve(repoRoot, s.signingP12Path);
    if (!fs.existsSync(p12Path))
      throw new Error(`SIGNING_P12_PATH points to ${s.signingP12Path}, which does not exist.`);
    p12 = fs.readFileSync(p12Path);
    passphrase = s.signingP12Passphrase ?? '';
    source = 'configured';
  } else {
    ({ p12, passphrase, p12Path } = loadOrCreateGenerated(s.siteName, s.keysDir ?? KEYS_DIR));
    source = 'generated';
  }
  const { key, cert, chain } = readP12(p12, passphrase);
  const certDer = certDerOf(cert);
  const material: SigningMaterial = {
    key,
    cert,
    certDer,
    chainDer: chain.map(certDerOf),
    fingerprint: sha256(certDer).toString('hex'),
    source,
    p12Path,
  };
  cached = { key: cacheKey, material };
  return material;
}

export function signingSettingsFrom(
  config: Pick<AppConfig, 'siteName' | 'signingP12Path' | 'signingP12Passphrase'>,
): SigningSettings {
  return {
    siteName: config.siteName,
    signingP12Path: config.signingP12Path,
    signingP12Passphrase: config.signingP12Passphrase,
  };
}

/** Who signs the certificates: fingerprint, subject and validity of the site's signing certificate. */
export function getSigningIdentity(s: SigningSettings): SigningIdentity {
  const m = loadSigningMaterial(s);
  return {
    fingerprint: m.fingerprint,
    subject: dnString(m.cert.subject.attributes),
    issuer: dnString(m.cert.issuer.attributes),
    serialNumber: m.cert.serialNumber,
    notBefore: m.cert.validity.notBefore.toISOString(),
    notAfter: m.cert.validity.notAfter.toISOString(),
    source: m.source,
  };
}
