/**
 * The CMS SignedData (RFC 5652) of a PDF signature, built on node-forge's ASN.1 because forge's
 * PKCS#7 writer cannot add arbitrary signed attributes. Signed attributes: content-type,
 * signing-time, message-digest and the ESS signing-certificate-v2 attribute (RFC 5035,
 * id-aa-signingCertificateV2 1.2.840.113549.1.9.16.2.47) carrying the SHA-256 hash of the signer
 * certificate and its issuer and serial number, which PAdES B-B requires (ETSI EN 319 142-1).
 * With a time-stamper, the SignerInfo also carries the unsigned attribute
 * id-aa-signatureTimeStampToken (1.2.840.113549.1.9.16.2.14, RFC 3161 appendix A): a token over
 * the signature value, which makes the signature PAdES B-T.
 */
import crypto from 'node:crypto';
import type forge from 'node-forge';
import {
  asn1,
  attribute,
  Class,
  der,
  derSetOf,
  fromDer,
  int,
  issuerAsn1,
  nul,
  octets,
  oid,
  OID,
  seq,
  serialAsn1,
  set,
  sha256,
  Type,
} from './der';
import type { SigningMaterial } from './keys';

function signingTimeValue(d: Date): forge.asn1.Asn1 {
  // RFC 5652 11.3: UTCTime for 1950-2049, GeneralizedTime otherwise.
  const y = d.getUTCFullYear();
  return y >= 1950 && y < 2050
    ? asn1.create(Class.UNIVERSAL, Type.UTCTIME, false, asn1.dateToUtcTime(d))
    : asn1.create(Class.UNIVERSAL, Type.GENERALIZEDTIME, false, asn1.dateToGeneralizedTime(d));
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

/** Asks a time-stamping authority for a token over the signature value (DER ContentInfo). */
export type TimeStamper = (signatureValue: Buffer) => Promise<Buffer>;

/**
 * Builds a detached CMS SignedData over `content` with CAdES-BES / PAdES B-B signed attributes,
 * and with a signature time-stamp (PAdES B-T) when a time-stamper is given.
 */
export async function buildCadesSignedData(
  content: Buffer,
  m: Pick<SigningMaterial, 'key' | 'certDer' | 'chainDer'>,
  signingTime = new Date(),
  timeStamper?: TimeStamper,
): Promise<Buffer> {
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
  const signerParts = [
    int(1),
    seq([issuerAsn1(certAsn1), serialAsn1(certAsn1)]), // IssuerAndSerialNumber
    sha256Alg,
    fromDer(signedAttrsImplicit),
    seq([oid(OID.sha256WithRSAEncryption), nul()]),
    octets(signature),
  ];
  if (timeStamper) {
    const token = await timeStamper(signature);
    // unsignedAttrs [1] IMPLICIT SET OF Attribute (RFC 5652 5.3)
    const unsigned = derSetOf([der(seq([oid(OID.signatureTimeStampToken), set([fromDer(token)])]))], 0xa1);
    signerParts.push(fromDer(unsigned));
  }
  const certs = [m.certDer, ...m.chainDer].map(fromDer);
  const signedData = seq([
    int(1),
    set([sha256Alg]),
    seq([oid(OID.data)]), // detached: no eContent
    asn1.create(Class.CONTEXT_SPECIFIC, 0, true, certs),
    set([seq(signerParts)]),
  ]);
  return der(seq([oid(OID.signedData), asn1.create(Class.CONTEXT_SPECIFIC, 0, true, [signedData])]));
}
