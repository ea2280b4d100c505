/**
 * Drumline's own verifier of a PDF signature: re-reads /ByteRange and /Contents, recomputes the
 * digest of the signed ranges, checks it against the message-digest attribute, checks the
 * signing-certificate-v2 hash against the embedded certificate, checks the RSA signature over
 * the DER of the signed attributes with the embedded certificate's public key, and checks the
 * signature time-stamp token when there is one.
 */
import forge from 'node-forge';
import type { PdfSignatureCheck } from '../contract';
import {
  asn1,
  children,
  der,
  dnString,
  fromDer,
  issuerAsn1,
  OID,
  oidOf,
  readTlv,
  seq,
  serialAsn1,
  sha256,
  value,
  whole,
} from './der';
import { verifyTimeStampToken } from './timestamp';

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
    timeStamp: base.timeStamp ?? null,
    problem,
  };
}

export interface VerifyOptions {
  /** PEM roots of the time-stamping authorities this site trusts (without them a time-stamp cannot verify). */
  tsaTrustedPem?: string[];
}

/**
 * Checks the last signature of a PDF. Pure Node (node-forge for certificates and RSA), no
 * external tool. Reports in words what is wrong when the signature does not verify. A signature
 * time-stamp, when present, must verify too (timestamp.ts); a signature without one is reported
 * with timeStamp null (PAdES B-B only).
 */
export function verifyPdfSignature(pdf: Buffer, opts: VerifyOptions = {}): PdfSignatureCheck {
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
  // The CMS is followed by zero padding up to the reserved room; its own DER length says where it
  // ends (stripping trailing zeros would cut a CMS whose last byte happens to be 0x00).
  const hex = gap.slice(1, -1);
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
    // signature OCTET STRING, then the optional unsignedAttrs [1]
    const sigTlv = siParts.filter((p) => p.tag === 0x04).at(-1);
    const unsignedTlv = siParts.find((p) => p.tag === 0xa1);
    if (!attrsTlv || !sigTlv) return fail(base, 'The signature has no signed attributes.');

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
    base.timeStamp = null;
    for (const attr of unsignedTlv ? children(cms, unsignedTlv) : []) {
      const [typeTlv, valuesTlv] = children(cms, attr);
      if (oidOf(cms, typeTlv) !== OID.signatureTimeStampToken) continue;
      const tokenTlv = children(cms, valuesTlv)[0];
      const check = verifyTimeStampToken(
        Buffer.from(whole(cms, tokenTlv)),
        Buffer.from(value(cms, sigTlv)),
        opts.tsaTrustedPem ?? [],
      );
      base.timeStamp = {
        present: true,
        valid: check.valid,
        time: check.time,
        authority: check.authority,
        serialNumber: check.serialNumber,
        ...(check.problem ? { problem: check.problem } : {}),
      };
      if (!check.valid) return fail(base, `The signature time-stamp does not verify: ${check.problem}.`);
    }
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
      timeStamp: base.timeStamp ?? null,
    };
  } catch (e) {
    return fail(base, `The signature cannot be read: ${(e as Error).message}.`);
  }
}

/** The signature time-stamp token (DER) and the signature value it stamps, for external tools (openssl ts -verify). */
export function extractTimeStampToken(pdf: Buffer): { token: Buffer; signatureValue: Buffer } | null {
  const cms = extractSignatureDer(pdf);
  if (!cms) return null;
  const top = readTlv(cms, 0);
  const sd = children(cms, children(cms, top)[1])[0];
  const sdParts = children(cms, sd);
  const si = children(cms, sdParts[sdParts.length - 1])[0];
  const siParts = children(cms, si);
  const sigTlv = siParts.filter((p) => p.tag === 0x04).at(-1);
  const unsignedTlv = siParts.find((p) => p.tag === 0xa1);
  if (!sigTlv || !unsignedTlv) return null;
  for (const attr of children(cms, unsignedTlv)) {
    const [typeTlv, valuesTlv] = children(cms, attr);
    if (oidOf(cms, typeTlv) === OID.signatureTimeStampToken)
      return {
        token: Buffer.from(whole(cms, children(cms, valuesTlv)[0])),
        signatureValue: Buffer.from(value(cms, sigTlv)),
      };
  }
  return null;
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
