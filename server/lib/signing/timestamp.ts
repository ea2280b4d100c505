/**
 * RFC 3161 time-stamps: a client that asks a time-stamping authority (TSA) for a token over
 * some bytes, and a verifier for such tokens (docs/certificates.md, "Trusted time").
 *
 * Request (RFC 3161 section 2.4.1): TimeStampReq { version 1, messageImprint { SHA-256, hash },
 * nonce, certReq TRUE }, sent by HTTP POST as application/timestamp-query (section 3.4).
 * The answer's status must be granted (0) or grantedWithMods (1), and its token must carry our
 * nonce and message imprint.
 *
 * Verification (section 2.4.2 and RFC 5652): the token is a CMS SignedData over a TSTInfo; its
 * message-digest attribute must be the digest of the TSTInfo, the RSA signature over the signed
 * attributes must verify with an embedded certificate that has the extended key usage
 * timeStamping, that certificate must be one of the trusted TSA roots or be issued (and signed)
 * by one, and be valid at the token's time; the TSTInfo's message imprint must be the hash of
 * the time-stamped bytes. Everything is read from the bytes as they are, with node:crypto.
 */
import crypto from 'node:crypto';
import type { TimeStampCheck } from '../contract';
import {
  asn1,
  children,
  Class,
  der,
  int,
  oid,
  OID,
  octets,
  oidOf,
  readTlv,
  seq,
  timeOf,
  Type,
  value,
  whole,
  type Tlv,
} from './der';

export interface TsaSettings {
  /** The TSA's URL (HTTP POST, application/timestamp-query). */
  url: string;
  /** PEM certificates of the TSA roots whose tokens are believed. */
  trustedPem: string[];
  timeoutMs?: number;
}

const HASH_NAME: Record<string, string> = {
  [OID.sha256]: 'sha256',
  [OID.sha384]: 'sha384',
  [OID.sha512]: 'sha512',
};

/** DER TimeStampReq over the SHA-256 of `data`, with a random nonce. */
export function buildTimeStampRequest(data: Buffer, nonce: Buffer): Buffer {
  const hash = crypto.createHash('sha256').update(data).digest();
  const nonceInt = asn1.create(Class.UNIVERSAL, Type.INTEGER, false, nonce.toString('binary'));
  return der(
    seq([
      int(1),
      seq([seq([oid(OID.sha256), asn1.create(Class.UNIVERSAL, Type.NULL, false, '')]), octets(hash)]),
      nonceInt,
      asn1.create(Class.UNIVERSAL, Type.BOOLEAN, false, String.fromCharCode(0xff)),
    ]),
  );
}

/** A positive 8-byte nonce (first byte 0x01-0x7f, so DER needs no leading zero). */
export function newNonce(): Buffer {
  const n = crypto.randomBytes(8);
  n[0] = (n[0] & 0x7f) | 0x01;
  return n;
}

/** Reads a TimeStampResp; returns the token (DER ContentInfo) or throws with the TSA's words. */
export function tokenFromResponse(resp: Buffer): Buffer {
  const top = readTlv(resp, 0);
  const [statusInfo, token] = children(resp, top);
  const parts = children(resp, statusInfo);
  const status = value(resp, parts[0]).readUIntBE(0, parts[0].length);
  if (status > 1 || !token) {
    const text = parts[1]
      ? children(resp, parts[1])
          .map((t) => value(resp, t).toString('utf8'))
          .join(' ')
      : '';
    throw new Error(`the time-stamping authority refused the request (status ${status}${text ? `: ${text}` : ''})`);
  }
  return Buffer.from(whole(resp, token));
}

/** Asks the TSA for a token over `data`; checks the answer before returning it. */
export async function requestTimeStamp(data: Buffer, tsa: TsaSettings): Promise<Buffer> {
  const nonce = newNonce();
  const body = buildTimeStampRequest(data, nonce);
  let res: Response;
  try {
    res = await fetch(tsa.url, {
      method: 'POST',
      headers: { 'content-type': 'application/timestamp-query', accept: 'application/timestamp-reply' },
      body: new Uint8Array(body),
      signal: AbortSignal.timeout(tsa.timeoutMs ?? 15_000),
    });
  } catch (e) {
    throw new Error(`the time-stamping authority cannot be reached (${(e as Error).message})`, { cause: e });
  }
  if (!res.ok) throw new Error(`the time-stamping authority answered HTTP ${res.status}`);
  const token = tokenFromResponse(Buffer.from(await res.arrayBuffer()));
  const check = verifyTimeStampToken(token, data, tsa.trustedPem);
  if (!check.valid) throw new Error(`the time-stamp token received does not verify: ${check.problem}`);
  if (check.nonce !== nonce.toString('hex')) throw new Error('the time-stamp token does not carry our nonce');
  return token;
}

interface TstInfo {
  hashOid: string;
  hashed: Buffer;
  serial: string;
  genTime: Date;
  policy: string;
  nonce: string | null;
}

function readTstInfo(b: Buffer): TstInfo {
  const parts = children(b, readTlv(b, 0));
  // version, policy, messageImprint, serialNumber, genTime, accuracy?, ordering?, nonce?, tsa [0]?, extensions [1]?
  const [, policy, imprint, serial, genTime, ...rest] = parts;
  const [alg, hashed] = children(b, imprint);
  const nonce = rest.find((t) => t.tag === 0x02);
  return {
    hashOid: oidOf(b, children(b, alg)[0]),
    hashed: Buffer.from(value(b, hashed)),
    serial: value(b, serial).toString('hex'),
    genTime: timeOf(b, genTime),
    policy: oidOf(b, policy),
    nonce: nonce ? value(b, nonce).toString('hex') : null,
  };
}

function fail(problem: string, partial: Partial<TimeStampCheck> = {}): TimeStampCheck & { nonce: string | null } {
  return {
    present: true,
    valid: false,
    time: partial.time ?? null,
    authority: partial.authority ?? null,
    serialNumber: partial.serialNumber ?? null,
    problem,
    nonce: null,
  };
}

function trusted(signer: crypto.X509Certificate, roots: crypto.X509Certificate[]): boolean {
  for (const root of roots) {
    if (signer.fingerprint256 === root.fingerprint256) return true;
    if (signer.checkIssued(root) && signer.verify(root.publicKey)) return true;
  }
  return false;
}

/**
 * Checks a time-stamp token (DER ContentInfo) over `data` against the trusted TSA roots.
 * Never throws: a broken token gives valid = false with the reason in words.
 */
export function verifyTimeStampToken(
  token: Buffer,
  data: Buffer,
  trustedPem: string[],
): TimeStampCheck & { nonce: string | null } {
  const partial: Partial<TimeStampCheck> = {};
  try {
    const top = readTlv(token, 0);
    token = token.subarray(0, top.end);
    const [ct, body] = children(token, top);
    if (oidOf(token, ct) !== OID.signedData) return fail('the time-stamp token is not a CMS SignedData');
    const sdParts = children(token, children(token, body)[0]);
    const encap = sdParts[2];
    const [eType, eWrap] = children(token, encap);
    if (oidOf(token, eType) !== OID.tstInfo) return fail('the time-stamp token does not hold a TSTInfo');
    const eOctets = children(token, eWrap)[0];
    const tstDer = Buffer.from(value(token, eOctets));
    const tst = readTstInfo(tstDer);
    partial.time = tst.genTime.toISOString();
    partial.serialNumber = tst.serial;

    const certsTlv = sdParts.find((p) => p.tag === 0xa0);
    const certs = certsTlv
      ? children(token, certsTlv)
          .filter((c) => c.tag === 0x30)
          .map((c) => new crypto.X509Certificate(Buffer.from(whole(token, c))))
      : [];
    const si = children(token, sdParts[sdParts.length - 1])[0];
    if (!si) return fail('the time-stamp token holds no signer', partial);
    const siParts = children(token, si);
    const digestAlg = oidOf(token, children(token, siParts[2])[0]);
    const attrsTlv: Tlv | undefined = siParts.find((p) => p.tag === 0xa0);
    const sigTlv = siParts.filter((p) => p.tag === 0x04).at(-1);
    if (!attrsTlv || !sigTlv) return fail('the time-stamp token has no signed attributes', partial);
    const hashName = HASH_NAME[digestAlg];
    if (!hashName) return fail(`the time-stamp token uses an unknown digest (${digestAlg})`, partial);

    let messageDigest: Buffer | null = null;
    let contentType: string | null = null;
    for (const attr of children(token, attrsTlv)) {
      const [typeTlv, valuesTlv] = children(token, attr);
      const v = children(token, valuesTlv)[0];
      const type = oidOf(token, typeTlv);
      if (type === OID.messageDigest) messageDigest = Buffer.from(value(token, v));
      if (type === OID.contentType) contentType = oidOf(token, v);
    }
    if (contentType !== OID.tstInfo) return fail('the time-stamp token signs another content type', partial);
    if (!messageDigest || !messageDigest.equals(crypto.createHash(hashName).update(tstDer).digest()))
      return fail('the time-stamp token was altered: its TSTInfo does not match the signed digest', partial);

    const signedAttrs = Buffer.from(whole(token, attrsTlv));
    signedAttrs[0] = 0x31; // the signature covers the SET OF encoding (RFC 5652 5.4)
    const signature = Buffer.from(value(token, sigTlv));
    const signer = certs.find((c) => {
      try {
        return crypto.verify(hashName, signedAttrs, c.publicKey, signature);
      } catch {
        return false;
      }
    });
    if (!signer) return fail('the signature of the time-stamping authority does not verify', partial);
    partial.authority = signer.subject.replace(/\n/g, ', ');
    if (!(signer.keyUsage ?? []).includes(OID.timeStamping))
      return fail('the certificate that signed the time-stamp is not a time-stamping certificate', partial);
    const at = tst.genTime.getTime();
    if (at < new Date(signer.validFrom).getTime() || at > new Date(signer.validTo).getTime())
      return fail('the time-stamping certificate was not valid at the time stamped', partial);
    const roots = trustedPem.map((p) => new crypto.X509Certificate(p));
    if (!trusted(signer, roots)) return fail('the time-stamping authority is not one this site trusts', partial);

    const imprintHash = HASH_NAME[tst.hashOid];
    if (!imprintHash) return fail(`the time-stamp uses an unknown hash (${tst.hashOid})`, partial);
    if (!crypto.createHash(imprintHash).update(data).digest().equals(tst.hashed))
      return fail('the time-stamp was made over other bytes than this signature', partial);
    return {
      present: true,
      valid: true,
      time: partial.time,
      authority: partial.authority,
      serialNumber: tst.serial,
      nonce: tst.nonce,
    };
  } catch (e) {
    return fail(`the time-stamp token cannot be read: ${(e as Error).message}`, partial);
  }
}
