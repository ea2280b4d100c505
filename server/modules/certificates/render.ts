/**
 * Rendering a certificate: gathers its content (content.ts), draws the overlay figure, renders
 * the PDF (document.ts) and signs it with a signature time-stamp. Reads only; runs outside every
 * transaction and every lock (docs/certificates.md, "Numbers").
 */
import type { Knex } from 'knex';
import { sha256Hex } from '../../lib/canonical';
import type { AppConfig } from '../../lib/config';
import { parseJson } from '../../lib/db';
import { renderPdf } from '../../lib/pdf';
import { getSigningIdentity, signingSettingsFrom, signPdf, timeStamperFor } from '../../lib/signing';
import { prepare, validateMethod, type IdentityMethod } from '../../spectra';
import { readSpectrumOff } from '../../workers/pool';
import { configOf } from './config';
import { gatherContent } from './content';
import type { CertificateContent } from './contract';
import { certificateDocument, type DocumentExtras } from './document';
import { overlaySvg } from './overlay';
import * as repo from './repo';

/** The overlay figure of the container with the lowest match score against its best reference. */
async function buildOverlay(db: Knex, content: CertificateContent): Promise<DocumentExtras> {
  const scored = content.containers.filter(
    (c): c is (typeof content.containers)[number] & { bestReferenceId: number } => c.bestReferenceId !== null,
  );
  if (scored.length === 0)
    return { overlaySvg: null, overlayCaption: 'No reference is recorded with the results; no overlay is drawn.' };
  const worst = scored.reduce((a, b) => ((b.matchScore ?? 2) < (a.matchScore ?? 2) ? b : a));
  const ref = content.references.find((r) => r.id === worst.bestReferenceId);
  try {
    const measurement = await db('measurement')
      .where({ id: worst.measurementId })
      .select('file_id', 'method_id')
      .first();
    if (!measurement) throw new Error('the measurement is missing');
    const methodRow = await db('identity_method').where({ id: measurement.method_id }).select('params').first();
    const method = parseJson<IdentityMethod | null>(methodRow?.params, null);
    if (!method || validateMethod(method).length) throw new Error('the stored method parameters cannot be read');
    const refRow = await db('reference_spectrum').where({ id: worst.bestReferenceId }).select('file_id').first();
    if (!refRow) throw new Error('the reference is missing');
    const [sf, rf] = await Promise.all([repo.fileBytes(db, measurement.file_id), repo.fileBytes(db, refRow.file_id)]);
    if (!sf || !rf) throw new Error('a raw file is missing');
    const sample = prepare(await readSpectrumOff(sf.data, sf.file_name), method);
    const reference = prepare(await readSpectrumOff(rf.data, rf.file_name), method);
    const svg = overlaySvg({
      grid: sample.grid,
      mask: sample.mask,
      sample: sample.trace,
      reference: reference.trace,
      sampleLabel: `Sample: container ${worst.label} (measurement ${worst.measurementId})`,
      referenceLabel: `Reference: ${ref?.code ?? worst.bestReferenceId}`,
    });
    return {
      overlaySvg: svg,
      overlayCaption:
        `Container ${worst.label}, the lowest correlation coefficient (r) of the lot (${worst.matchScore === null ? 'n/a' : worst.matchScore.toFixed(4)}), ` +
        `against reference ${ref?.code ?? worst.bestReferenceId}: baseline-corrected, smoothed absorbance scaled to the strongest band, ` +
        `on the method grid; shaded regions are excluded by the method.`,
    };
  } catch (e) {
    return {
      overlaySvg: null,
      overlayCaption: `The overlay could not be drawn (${(e as Error).message}); the results above are unaffected.`,
    };
  }
}

export interface PreparedCertificate {
  content: CertificateContent;
  pdf: Buffer;
  sha256: string;
  fingerprint: string;
}

export interface PrepareInput {
  lotId: number;
  testId: number;
  number: string;
  issuedAt: Date;
  supersedes: CertificateContent['supersedes'];
}

/** Gathers, renders and signs a certificate (no writes). Used by issuing and by the benchmark. */
export async function prepareCertificate(
  db: Knex,
  input: PrepareInput,
  config?: AppConfig,
): Promise<PreparedCertificate> {
  const cfg = configOf(config);
  const settings = signingSettingsFrom(cfg);
  const identity = getSigningIdentity(settings);
  const { content } = await gatherContent(db, {
    lotId: input.lotId,
    testId: input.testId,
    number: input.number,
    issuedAt: input.issuedAt,
    site: { name: cfg.siteName, address: cfg.siteAddress, timeZone: cfg.siteTimeZone },
    publicUrl: cfg.publicUrl,
    signingFingerprint: identity.fingerprint,
    supersedes: input.supersedes,
  });
  const extras = await buildOverlay(db, content);
  const unsigned = await renderPdf(certificateDocument(content, extras));
  const { pdf, fingerprint } = await signPdf(
    unsigned,
    {
      reason: `Identity certificate ${content.number} for lot ${content.lot.lotNumber}`,
      location: cfg.siteName,
      name: `${cfg.siteName} identity certificates`,
      contactInfo: cfg.publicUrl,
      signingTime: input.issuedAt,
    },
    settings,
    timeStamperFor(cfg),
  );
  return { content, pdf, sha256: sha256Hex(pdf), fingerprint };
}
