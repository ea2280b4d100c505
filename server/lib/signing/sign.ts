/**
 * Signing a finished PDF: @signpdf/placeholder-plain adds the signature dictionary with
 * /SubFilter /ETSI.CAdES.detached (ISO 32000-2 12.8, ETSI EN 319 142-1), and @signpdf/signpdf
 * fills it with the CMS from cms.ts (an incremental update).
 */
import { Signer } from '@signpdf/utils';
import { SignPdf } from '@signpdf/signpdf';
import { plainAddPlaceholder } from '@signpdf/placeholder-plain';
import { buildCadesSignedData, type TimeStamper } from './cms';
import { loadSigningMaterial, type SigningMaterial, type SigningSettings } from './keys';

/** A @signpdf Signer producing the CAdES detached signature with the site's certificate. */
export class CadesSigner extends Signer {
  constructor(
    private readonly material: Pick<SigningMaterial, 'key' | 'certDer' | 'chainDer'>,
    private readonly timeStamper?: TimeStamper,
  ) {
    super();
  }

  override async sign(pdfBuffer: Buffer, signingTime?: Date): Promise<Buffer> {
    return buildCadesSignedData(pdfBuffer, this.material, signingTime ?? new Date(), this.timeStamper);
  }
}

export interface SignPdfInfo {
  reason: string;
  location: string;
  contactInfo?: string;
  name: string;
  signingTime?: Date;
}

/**
 * Reserved room for the signature (bytes; doubled in hex). Enough for a key plus a 3-certificate
 * chain and a time-stamp token that embeds the authority's certificate.
 */
export const SIGNATURE_ROOM = 20_480;

/** Signs a finished PDF (an incremental update with the signature dictionary). */
export async function signPdf(
  pdf: Buffer,
  info: SignPdfInfo,
  s: SigningSettings,
  timeStamper?: TimeStamper,
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
  const signed = await new SignPdf().sign(withPlaceholder, new CadesSigner(m, timeStamper), signingTime);
  return { pdf: signed, fingerprint: m.fingerprint };
}
