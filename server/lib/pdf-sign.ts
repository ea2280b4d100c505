/**
 * Digital signatures on PDFs: the site's signing certificate, a CAdES detached signer and an
 * independent verifier.
 *
 * Signing identity: a PKCS#12 file configured with SIGNING_P12_PATH / SIGNING_P12_PASSPHRASE,
 * or, when none is configured, a self-signed RSA-2048 certificate generated at first use into the
 * ignored folder .keys/ (signing.p12 plus signing.passphrase, both mode 0600). Its SHA-256
 * fingerprint is shown to administrators and printed with every verification, so a reader can
 * tell which key signed a certificate.
 *
 * Signature: PDF signature dictionary with /SubFilter /ETSI.CAdES.detached (ISO 32000-2 12.8,
 * ETSI EN 319 142-1 PAdES baseline B-B), added by @signpdf/placeholder-plain to the finished
 * PDF. The CMS SignedData (RFC 5652) is built here on node-forge's ASN.1 because forge's PKCS#7
 * writer cannot add arbitrary signed attributes. Signed attributes: content-type, signing-time,
 * message-digest and the ESS signing-certificate-v2 attribute (RFC 5035,
 * id-aa-signingCertificateV2 1.2.840.113549.1.9.16.2.47) carrying the SHA-256 hash of the signer
 * certificate and its issuer and serial number, which PAdES B-B requires.
 *
 * Verification (verifyPdfSignature) re-reads /ByteRange and /Contents, recomputes the digest of
 * the signed ranges, checks it against the message-digest attribute, checks the
 * signing-certificate-v2 hash against the embedded certificate, and checks the RSA signature over
 * the DER of the signed attributes with the embedded certificate's public key.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import forge from 'node-forge';
import { Signer } from '@signpdf/utils';
import { SignPdf } from '@signpdf/signpdf';
import { plainAddPlaceholder } from '@signpdf/placeholder-plain';
import { repoRoot } from '../../db/config';
import type { AppConfig } from './config';
import type { PdfSignatureCheck, SigningIdentity } from './contract';

const asn1 = forge.asn1;

export const OID = {
  data: '1.2.840.113549.1.7.1',
  signedData: '1.2.840.113549.1.7.2',
  contentType: '1.2.840.113549.1.9.3',
  messageDigest: '1.2.840.113549.1.9.4',
  signingTime: '1.2.840.113549.1.9.5',
  signingCertificateV2: '1.2.840.113549.1.9.16.2.47',
  sha256: '2.16.840.1.101.3.4.2.1',
  rsaEncryption: '1.2.840.113549.1.1.1',
  sha256WithRSAEncryption: '1.2.840.113549.1.1.11',
} as const;

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

// ---------------------------------------------------------------------------------------------
// Signing identity
// ---------------------------------------------------------------------------------------------

let cached: { key: string; material: SigningMaterial } | null = null;

function dnString(attrs: forge.pki.CertificateField[]): string {
  return attrs.map((a) => `${a.shortName ?? a.name ?? a.type}=${a.value}`).join(', ');
}

function certDerOf(cert: forge.pki.Certificate): Buffer {
  return Buffer.from(asn1.toDer(forge.pki.certificateToAsn1(cert)).getBytes(), 'binary');
}

export function sha256(buf: Uint8Array): Buffer {
  return crypto.createHash('sha256').update(buf).digest();
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

// ---------------------------------------------------------------------------------------------
// CMS SignedData with CAdES signed attributes
// ---------------------------------------------------------------------------------------------

const { Class, Type } = asn1;
const seq = (v: forge.asn1.Asn1[]) => asn1.create(Class.UNIVERSAL, Type.SEQUENCE, true, v);
const set = (v: forge.asn1.Asn1[]) => asn1.create(Class.UNIVERSAL, Type.SET, true, v);
const oid = (o: string) => asn1.create(Class.UNIVERSAL, Type.OID, false, asn1.oidToDer(o).getBytes());
const octets = (b: Buffer) => asn1.create(Class.UNIVERSAL, Type.OCTETSTRING, false, b.toString('binary'));
const int = (n: number) => asn1.create(Class.UNIVERSAL, Type.INTEGER, false, asn1.integerToDer(n).getBytes());
const nul = () => asn1.create(Class.UNIVERSAL, Type.NULL, false, '');
const der = (a: forge.asn1.Asn1) => Buffer.from(asn1.toDer(a).getBytes(), 'binary');
// decodeBitStrings off: BIT STRINGs stay opaque, so re-encoding a parsed certificate gives its bytes back.
const fromDer = (b: Buffer) =>
  (
    asn1.fromDer as unknown as (
      d: forge.util.ByteStringBuffer,
      o: { strict: boolean; decodeBitStrings: boolean },
    ) => forge.asn1.Asn1
  )(forge.util.createBuffer(b.toString('binary')), { strict: true, decodeBitStrings: false });

function attribute(type: string, value: forge.asn1.Asn1): forge.asn1.Asn1 {
  return seq([oid(type), set([value])]);
}

function signingTimeValue(d: Date): forge.asn1.Asn1 {
  // RFC 5652 11.3: UTCTime for 1950-2049, GeneralizedTime otherwise.
  const y = d.getUTCFullYear();
  return y >= 1950 && y < 2050
    ? asn1.create(Class.UNIVERSAL, Type.UTCTIME, false, asn1.dateToUtcTime(d))
    : asn1.create(Class.UNIVERSAL, Type.GENERALIZEDTIME, false, asn1.dateToGeneralizedTime(d));
}

/** Serial number of a certificate as an ASN.1 INTEGER (taken from its own DER, unchanged). */
function serialAsn1(certAsn1: forge.asn1.Asn1): forge.asn1.Asn1 {
  const tbs = (certAsn1.value as forge.asn1.Asn1[])[0];
  const parts = tbs.value as forge.asn1.Asn1[];
  // tbsCertificate: [0] version (optional), serialNumber, signature, issuer, ...
  const hasVersion = parts[0].tagClass === Class.CONTEXT_SPECIFIC;
  return parts[hasVersion ? 1 : 0];
}

function issuerAsn1(certAsn1: forge.asn1.Asn1): forge.asn1.Asn1 {
  const parts = (certAsn1.value as forge.asn1.Asn1[])[0].value as forge.asn1.Asn1[];
  const hasVersion = parts[0].tagClass === Class.CONTEXT_SPECIFIC;
  return parts[hasVersion ? 3 : 2];
}

/**
 * ESS SigningCertificateV2 (RFC 5035 section 3):
 *   SigningCertificateV2 ::= SEQUENCE { certs SEQUENCE OF ESSCertIDv2, policies ... OPTIONAL }
 *   ESSCertIDv2 ::= SEQUENCE { hashAlgorithm AlgorithmIdentifier DEFAULT {id-sha256},
 *                              certHash OCTET STRING, issuerSerial IssuerSerial OPTIONAL }
 *   IssuerSerial ::= SEQUENCE { issuer GeneralNames, serialNumber CertificateSerialNumber }
 * The hash algorithm is SHA-256, the DEFAULT, so DER leaves it out.
 */
function signingCertificateV2(certDer: Buffer): forge.asn1.Asn1 {
  const certAsn1 = fromDer(certDer);
  const issuerSerial = seq([
    seq([asn1.create(Class.CONTEXT_SPECIFIC, 4, true, [issuerAsn1(certAsn1)])]), // GeneralNames: directoryName [4]
    serialAsn1(certAsn1),
  ]);
  return seq([seq([seq([octets(sha256(certDer)), issuerSerial])])]);
}

/** DER SET OF: elements sorted by their encodings (X.690 11.6). */
function derSetOf(elements: Buffer[]): Buffer {
  const sorted = [...elements].sort(Buffer.compare);
  const body = Buffer.concat(sorted);
  return Buffer.concat([Buffer.from([0x31]), derLength(body.length), body]);
}

function derLength(n: number): Buffer {
  if (n < 0x80) return Buffer.from([n]);
  const bytes: number[] = [];
  for (let v = n; v > 0; v = Math.floor(v / 256)) bytes.unshift(v & 0xff);
  return Buffer.from([0x80 | bytes.length, ...bytes]);
}

/** Builds a detached CMS SignedData over `content` with CAdES-BES / PAdES B-B signed attributes. */
export function buildCadesSignedData(
  content: Buffer,
  m: Pick<SigningMaterial, 'key' | 'certDer' | 'chainDer'>,
  signingTime = new Date(),
): Buffer {
  const digest = sha256(content);
  const attrs = [
    attribute(OID.contentType, oid(OID.data)),
    attribute(OID.signingTime, signingTimeValue(signingTime)),
    attribute(OID.messageDigest, octets(digest)),
    attribute(OID.signingCertificateV2, signingCertificateV2(m.certDer)),
  ].map(der);
  const signedAttrsSet = derSetOf(attrs); // what the signature covers (RFC 5652 5.4)
  const signature = crypto.sign('sha256', signedAttrsSet, { key: m.key, padding: crypto.constants.RSA_PKCS1_PADDING });
  // In SignerInfo the same bytes carry the tag [0] IMPLICIT instead of SET.
  const signedAttrsImplicit = Buffer.concat([Buffer.from([0xa0]), signedAttrsSet.subarray(1)]);

  const certAsn1 = fromDer(m.certDer);
  const sha256Alg = seq([oid(OID.sha256), nul()]);
  const signerInfo = seq([
    int(1),
    seq([issuerAsn1(certAsn1), serialAsn1(certAsn1)]), // IssuerAndSerialNumber
    sha256Alg,
    fromDer(signedAttrsImplicit),
    seq([oid(OID.sha256WithRSAEncryption), nul()]),
    octets(signature),
  ]);
  const certs = [m.certDer, ...m.chainDer].map(fromDer);
  const signedData = seq([
    int(1),
    set([sha256Alg]),
    seq([oid(OID.data)]), // detached: no eContent
    asn1.create(Class.CONTEXT_SPECIFIC, 0, true, certs),
    set([signerInfo]),
  ]);
  return der(seq([oid(OID.signedData), asn1.create(Class.CONTEXT_SPECIFIC, 0, true, [signedData])]));
}

/** A @signpdf Signer producing the CAdES detached signature with the site's certificate. */
export class CadesSigner extends Signer {
  constructor(private readonly material: Pick<SigningMaterial, 'key' | 'certDer' | 'chainDer'>) {
    super();
  }

  override async sign(pdfBuffer: Buffer, signingTime?: Date): Promise<Buffer> {
    return buildCadesSignedData(pdfBuffer, this.material, signingTime ?? new Date());
  }
}

export interface SignPdfInfo {
  reason: string;
  location: string;
  contactInfo?: string;
  name: string;
  signingTime?: Date;
}

/** Reserved room for the signature (bytes; doubled in hex). Enough for a key plus a 3-certificate chain. */
export const SIGNATURE_ROOM = 12_288;

/** Signs a finished PDF (an incremental update with the signature dictionary). */
export async function signPdf(
  pdf: Buffer,
  info: SignPdfInfo,
  s: SigningSettings,
): Promise<{ pdf: Buffer; fingerprint: string }> {
  const m = loadSigningMaterial(s);
  const signingTime = info.signingTime ?? new Date();
  const withPlaceholder = plainAddPlaceholder({
    pdfBuffer: pdf,
    reason: info.reason,
    contactInfo: info.contactInfo ?? '',
    name: info.name,
    location: info.location,
    signingTime,
    signatureLength: SIGNATURE_ROOM,
    subFilter: 'ETSI.CAdES.detached',
    appName: 'Drumline',
  });
  const signed = await new SignPdf().sign(withPlaceholder, new CadesSigner(m), signingTime);
  return { pdf: signed, fingerprint: m.fingerprint };
}

// ---------------------------------------------------------------------------------------------
// Verification
// ---------------------------------------------------------------------------------------------

interface Tlv {
  tag: number;
  start: number; // offset of the tag byte
  headerLength: number;
  length: number;
  end: number; // offset after the value
}

function readTlv(b: Buffer, at: number): Tlv {
  if (at + 2 > b.length) throw new Error('truncated DER');
  const tag = b[at];
  let len = b[at + 1];
  let hl = 2;
  if (len & 0x80) {
    const n = len & 0x7f;
    if (n === 0 || n > 4 || at + 2 + n > b.length) throw new Error('unsupported DER length');
    len = 0;
    for (let i = 0; i < n; i++) len = len * 256 + b[at + 2 + i];
    hl = 2 + n;
  }
  const end = at + hl + len;
  if (end > b.length) throw new Error('truncated DER');
  return { tag, start: at, headerLength: hl, length: len, end };
}

function children(b: Buffer, t: Tlv): Tlv[] {
  const out: Tlv[] = [];
  for (let p = t.start + t.headerLength; p < t.end;) {
    const c = readTlv(b, p);
    out.push(c);
    p = c.end;
  }
  return out;
}

const value = (b: Buffer, t: Tlv) => b.subarray(t.start + t.headerLength, t.end);
const whole = (b: Buffer, t: Tlv) => b.subarray(t.start, t.end);

function oidOf(b: Buffer, t: Tlv): string {
  return asn1.derToOid(forge.util.createBuffer(value(b, t).toString('binary')));
}

function fail(base: Partial<PdfSignatureCheck>, problem: string): PdfSignatureCheck {
  return {
    signed: base.signed ?? false,
    valid: false,
    signerSubject: base.signerSubject ?? null,
    fingerprint: base.fingerprint ?? null,
    subFilter: base.subFilter ?? null,
    signingTime: base.signingTime ?? null,
    coversWholeFile: base.coversWholeFile ?? false,
    hasSigningCertificateV2: base.hasSigningCertificateV2 ?? false,
    problem,
  };
}

/**
 * Checks the last signature of a PDF. Pure Node (node-forge for certificates and RSA), no
 * external tool. Reports in words what is wrong when the signature does not verify.
 */
export function verifyPdfSignature(pdf: Buffer): PdfSignatureCheck {
  const text = pdf.toString('latin1');
  const brRe = /\/ByteRange\s*\[\s*(\d+)\s+(\d+)\s+(\d+)\s+(\d+)\s*\]/g;
  let br: RegExpExecArray | null = null;
  for (let m = brRe.exec(text); m; m = brRe.exec(text)) br = m;
  if (!br) return fail({}, 'The file carries no digital signature.');
  const [a, b, c, d] = br.slice(1, 5).map(Number);
  const base: Partial<PdfSignatureCheck> = { signed: true };
  const sf = /\/SubFilter\s*\/([A-Za-z0-9.]+)/.exec(text.slice(Math.max(0, br.index - 4000), br.index + 4000));
  base.subFilter = sf ? sf[1] : null;
  if (a !== 0 || b <= 0 || c <= b || c + d > pdf.length)
    return fail(base, 'The signature byte range does not fit the file.');
  base.coversWholeFile = c + d === pdf.length;
  const gap = text.slice(b, c);
  if (!/^<[0-9A-Fa-f]*>$/.test(gap)) return fail(base, 'The signature contents are not where the byte range says.');
  const hex = gap.slice(1, -1).replace(/(00)+$/, '');
  let cms = Buffer.from(hex.length % 2 ? hex + '0' : hex, 'hex');
  const signedContent = Buffer.concat([pdf.subarray(a, a + b), pdf.subarray(c, c + d)]);

  try {
    const top = readTlv(cms, 0);
    cms = cms.subarray(0, top.end); // padding after the DER is ignored
    const [ctOid, ctBody] = children(cms, top);
    if (oidOf(cms, ctOid) !== OID.signedData) return fail(base, 'The signature is not a CMS SignedData.');
    const sd = children(cms, ctBody)[0];
    const sdParts = children(cms, sd);
    const certsTlv = sdParts.find((p) => p.tag === 0xa0);
    const signerInfos = sdParts[sdParts.length - 1];
    const si = children(cms, signerInfos)[0];
    if (!si) return fail(base, 'The signature holds no signer.');
    const siParts = children(cms, si);
    const sid = siParts[1];
    const attrsTlv = siParts.find((p) => p.tag === 0xa0);
    const sigTlv = siParts[siParts.length - 1];
    if (!attrsTlv) return fail(base, 'The signature has no signed attributes.');

    // Signer certificate: the embedded one whose issuer and serial number match the signer identifier.
    const sidBytes = whole(cms, sid);
    let signerCertDer: Buffer | null = null;
    for (const ct of certsTlv ? children(cms, certsTlv) : []) {
      const certDer = Buffer.from(whole(cms, ct));
      const certAsn1 = fromDer(certDer);
      const isn = der(seq([issuerAsn1(certAsn1), serialAsn1(certAsn1)]));
      if (isn.equals(sidBytes)) signerCertDer = certDer;
    }
    if (!signerCertDer) return fail(base, 'The signer certificate is not embedded in the signature.');
    const cert = forge.pki.certificateFromAsn1(asn1.fromDer(forge.util.createBuffer(signerCertDer.toString('binary'))));
    base.signerSubject = dnString(cert.subject.attributes);
    base.fingerprint = sha256(signerCertDer).toString('hex');

    let messageDigest: Buffer | null = null;
    let essHash: Buffer | null = null;
    for (const attr of children(cms, attrsTlv)) {
      const [typeTlv, valuesTlv] = children(cms, attr);
      const type = oidOf(cms, typeTlv);
      const v = children(cms, valuesTlv)[0];
      if (type === OID.messageDigest) messageDigest = Buffer.from(value(cms, v));
      else if (type === OID.signingTime) {
        const s = value(cms, v).toString('latin1');
        base.signingTime = (v.tag === 0x17 ? asn1.utcTimeToDate(s) : asn1.generalizedTimeToDate(s)).toISOString();
      } else if (type === OID.signingCertificateV2) {
        base.hasSigningCertificateV2 = true;
        const certIds = children(cms, children(cms, v)[0]);
        const first = certIds[0] ? children(cms, certIds[0]) : [];
        const hashTlv = first.find((p) => p.tag === 0x04);
        const algTlv = first[0]?.tag === 0x30 ? first[0] : null;
        if (algTlv && oidOf(cms, children(cms, algTlv)[0]) !== OID.sha256)
          return fail(base, 'The signing-certificate attribute uses a hash other than SHA-256.');
        essHash = hashTlv ? Buffer.from(value(cms, hashTlv)) : null;
      }
    }
    if (!messageDigest) return fail(base, 'The signature has no message digest.');
    if (!messageDigest.equals(sha256(signedContent)))
      return fail(base, 'The document was changed after signing: its digest does not match the signed digest.');
    if (essHash && !essHash.equals(sha256(signerCertDer)))
      return fail(base, 'The signing-certificate attribute does not match the embedded certificate.');

    const signedAttrs = Buffer.from(whole(cms, attrsTlv));
    signedAttrs[0] = 0x31; // verify over the SET OF encoding (RFC 5652 5.4)
    const md = forge.md.sha256.create();
    md.update(signedAttrs.toString('binary'));
    const signature = value(cms, sigTlv).toString('binary');
    let ok = false;
    try {
      ok = (cert.publicKey as forge.pki.rsa.PublicKey).verify(md.digest().bytes(), signature);
    } catch {
      ok = false; // forge throws when the decrypted block is not PKCS#1 v1.5: a wrong signature
    }
    if (!ok)
      return fail(base, 'The RSA signature over the signed attributes does not verify with the embedded certificate.');
    if (!base.coversWholeFile)
      return fail(base, 'Content was appended after the signature; the signature does not cover the whole file.');
    return {
      signed: true,
      valid: true,
      signerSubject: base.signerSubject ?? null,
      fingerprint: base.fingerprint ?? null,
      subFilter: base.subFilter ?? null,
      signingTime: base.signingTime ?? null,
      coversWholeFile: true,
      hasSigningCertificateV2: base.hasSigningCertificateV2 ?? false,
    };
  } catch (e) {
    return fail(base, `The signature cannot be read: ${(e as Error).message}.`);
  }
}

/** The DER CMS of the last signature, for external tools (openssl cms -inform DER). */
export function extractSignatureDer(pdf: Buffer): Buffer | null {
  const text = pdf.toString('latin1');
  const all = [...text.matchAll(/\/ByteRange\s*\[\s*(\d+)\s+(\d+)\s+(\d+)\s+(\d+)\s*\]/g)];
  const last = all.at(-1);
  if (!last) return null;
  const b = Number(last[2]);
  const c = Number(last[3]);
  const hex = text.slice(b + 1, c - 1);
  const cms = Buffer.from(hex, 'hex');
  try {
    return cms.subarray(0, readTlv(cms, 0).end);
  } catch {
    return null;
  }
}
