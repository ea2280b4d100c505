/**
 * DER building blocks shared by the signer, the verifier and the time-stamp code: object
 * identifiers, node-forge ASN.1 constructors, DER SET OF ordering, and a small zero-copy TLV
 * reader that walks bytes exactly as they were signed (re-encoding would hide a tampered length).
 */
import crypto from 'node:crypto';
import forge from 'node-forge';

export const asn1 = forge.asn1;

export const OID = {
  data: '1.2.840.113549.1.7.1',
  signedData: '1.2.840.113549.1.7.2',
  contentType: '1.2.840.113549.1.9.3',
  messageDigest: '1.2.840.113549.1.9.4',
  signingTime: '1.2.840.113549.1.9.5',
  signingCertificateV2: '1.2.840.113549.1.9.16.2.47',
  signingCertificate: '1.2.840.113549.1.9.16.2.12',
  /** RFC 3161 appendix A: unsigned attribute holding a time-stamp token over the signature value. */
  signatureTimeStampToken: '1.2.840.113549.1.9.16.2.14',
  /** RFC 3161: content type of the TSTInfo inside a time-stamp token. */
  tstInfo: '1.2.840.113549.1.9.16.1.4',
  timeStamping: '1.3.6.1.5.5.7.3.8',
  sha256: '2.16.840.1.101.3.4.2.1',
  sha384: '2.16.840.1.101.3.4.2.2',
  sha512: '2.16.840.1.101.3.4.2.3',
  rsaEncryption: '1.2.840.113549.1.1.1',
  sha256WithRSAEncryption: '1.2.840.113549.1.1.11',
} as const;

export function sha256(buf: Uint8Array): Buffer {
  return crypto.createHash('sha256').update(buf).digest();
}

const { Class, Type } = asn1;
export { Class, Type };
export const seq = (v: forge.asn1.Asn1[]) => asn1.create(Class.UNIVERSAL, Type.SEQUENCE, true, v);
export const set = (v: forge.asn1.Asn1[]) => asn1.create(Class.UNIVERSAL, Type.SET, true, v);
export const oid = (o: string) => asn1.create(Class.UNIVERSAL, Type.OID, false, asn1.oidToDer(o).getBytes());
export const octets = (b: Buffer) => asn1.create(Class.UNIVERSAL, Type.OCTETSTRING, false, b.toString('binary'));
export const int = (n: number) => asn1.create(Class.UNIVERSAL, Type.INTEGER, false, asn1.integerToDer(n).getBytes());
export const nul = () => asn1.create(Class.UNIVERSAL, Type.NULL, false, '');
export const der = (a: forge.asn1.Asn1) => Buffer.from(asn1.toDer(a).getBytes(), 'binary');
// decodeBitStrings off: BIT STRINGs stay opaque, so re-encoding a parsed certificate gives its bytes back.
export const fromDer = (b: Buffer) =>
  (
    asn1.fromDer as unknown as (
      d: forge.util.ByteStringBuffer,
      o: { strict: boolean; decodeBitStrings: boolean },
    ) => forge.asn1.Asn1
  )(forge.util.createBuffer(b.toString('binary')), { strict: true, decodeBitStrings: false });

export function attribute(type: string, value: forge.asn1.Asn1): forge.asn1.Asn1 {
  return seq([oid(type), set([value])]);
}

export function derLength(n: number): Buffer {
  if (n < 0x80) return Buffer.from([n]);
  const bytes: number[] = [];
  for (let v = n; v > 0; v = Math.floor(v / 256)) bytes.unshift(v & 0xff);
  return Buffer.from([0x80 | bytes.length, ...bytes]);
}

/** DER SET OF: elements sorted by their encodings (X.690 11.6). */
export function derSetOf(elements: Buffer[], tag = 0x31): Buffer {
  const sorted = [...elements].sort(Buffer.compare);
  const body = Buffer.concat(sorted);
  return Buffer.concat([Buffer.from([tag]), derLength(body.length), body]);
}

/** Serial number of a certificate as an ASN.1 INTEGER (taken from its own DER, unchanged). */
export function serialAsn1(certAsn1: forge.asn1.Asn1): forge.asn1.Asn1 {
  const tbs = (certAsn1.value as forge.asn1.Asn1[])[0];
  const parts = tbs.value as forge.asn1.Asn1[];
  // tbsCertificate: [0] version (optional), serialNumber, signature, issuer, ...
  const hasVersion = parts[0].tagClass === Class.CONTEXT_SPECIFIC;
  return parts[hasVersion ? 1 : 0];
}

export function issuerAsn1(certAsn1: forge.asn1.Asn1): forge.asn1.Asn1 {
  const parts = (certAsn1.value as forge.asn1.Asn1[])[0].value as forge.asn1.Asn1[];
  const hasVersion = parts[0].tagClass === Class.CONTEXT_SPECIFIC;
  return parts[hasVersion ? 3 : 2];
}

export function dnString(attrs: forge.pki.CertificateField[]): string {
  return attrs.map((a) => `${a.shortName ?? a.name ?? a.type}=${a.value}`).join(', ');
}

// ---- reading

export interface Tlv {
  tag: number;
  start: number; // offset of the tag byte
  headerLength: number;
  length: number;
  end: number; // offset after the value
}

export function readTlv(b: Buffer, at: number): Tlv {
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

export function children(b: Buffer, t: Tlv): Tlv[] {
  const out: Tlv[] = [];
  for (let p = t.start + t.headerLength; p < t.end;) {
    const c = readTlv(b, p);
    out.push(c);
    p = c.end;
  }
  return out;
}

export const value = (b: Buffer, t: Tlv) => b.subarray(t.start + t.headerLength, t.end);
export const whole = (b: Buffer, t: Tlv) => b.subarray(t.start, t.end);

export function oidOf(b: Buffer, t: Tlv): string {
  return asn1.derToOid(forge.util.createBuffer(value(b, t).toString('binary')));
}

/** A GeneralizedTime or UTCTime value as a Date. */
export function timeOf(b: Buffer, t: Tlv): Date {
  const s = value(b, t).toString('latin1');
  return t.tag === 0x17 ? asn1.utcTimeToDate(s) : asn1.generalizedTimeToDate(s);
}
