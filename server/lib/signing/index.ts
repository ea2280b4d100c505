/**
 * Digital signatures on PDFs (docs/certificates.md): the site's signing identity (keys.ts), the
 * CMS SignedData with CAdES attributes (cms.ts), signing a PDF (sign.ts), RFC 3161 time-stamps
 * (timestamp.ts, with a local fake authority for development in fake-tsa.ts and the site's
 * settings in tsa.ts) and an independent verifier (verify.ts) on shared DER helpers (der.ts).
 */
export { OID, sha256 } from './der';
export {
  KEYS_DIR,
  generateSigningP12,
  getSigningIdentity,
  loadSigningMaterial,
  readP12,
  signingSettingsFrom,
  type SigningMaterial,
  type SigningSettings,
} from './keys';
export { buildCadesSignedData, type TimeStamper } from './cms';
export { CadesSigner, SIGNATURE_ROOM, signPdf, type SignPdfInfo } from './sign';
export { requestTimeStamp, verifyTimeStampToken, type TsaSettings } from './timestamp';
export { startFakeTsa, fakeTsaFiles, type FakeTsa } from './fake-tsa';
export { resolveTsa, tsaTrustedPem, timeStamperFor } from './tsa';
export { extractSignatureDer, extractTimeStampToken, verifyPdfSignature, type VerifyOptions } from './verify';
