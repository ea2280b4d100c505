/**
 * The identity certificate as a pdfmake document: header with site and number, lot and
 * material, method, references, instrument and check, per-container results, the spectrum
 * figure, e-signatures, conclusion, caution, QR code to the verification page, and
 * "Page x of y" on every page. Verdicts are printed as symbol and word.
 */
import { FROM_EXPORT_FOLDER } from '../intake/contract';
import { formatSiteTime } from '../../lib/contract';
import type { Content, TableCell, TDocumentDefinitions } from '../../lib/pdf';
import type { CertificateContent, SignatureLine } from './contract';

export const CAUTION_TEXT =
  "This certificate records an identity test carried out under the laboratory's validated procedure. " +
  'It is not a release of the lot: release remains the responsibility of the authorised person under local GMP rules.';

/**
 * What the infrared test confirms and what it does not (issue 11 item 6; docs/certificates.md,
 * "Identity, not grade"): an IR spectrum identifies the substance; grade, purity, pharmacopoeial
 * compliance and other quality attributes are only copied from the label and the material record.
 */
export const IDENTITY_ONLY_TEXT =
  'This certificate confirms the identity of the substance only. Grade, monograph compliance, purity, ' +
  'assay and other quality attributes are stated as labelled and are not confirmed by the infrared test.';

/** A grade attribute IR cannot confirm, printed as the label states it. */
export const asLabelled = (v: string): string => (v ? `${v} (as labelled)` : '—');

const MEANING_WORDS: Record<string, string> = {
  performed: 'Performed',
  verified: 'Verified',
  approved: 'Approved',
  'approved-with-justification': 'Approved with justification',
  'instrument-check': 'Instrument check',
  issued: 'Issued',
};

export function meaningWord(m: string): string {
  return MEANING_WORDS[m] ?? m.charAt(0).toUpperCase() + m.slice(1).replace(/-/g, ' ');
}

/** "2026-03-04 14:05:09 Europe/Berlin (GMT+1)": date and time in the site's time zone, the zone named. */
export function formatZoned(isoTime: string, timeZone: string): string {
  return formatSiteTime(isoTime, timeZone, { seconds: true, zone: 'name-and-offset' });
}

const TECHNIQUE_WORDS: Record<string, string> = {
  'mid-ir-atr': 'Mid-IR, ATR',
  'mid-ir-transmission': 'Mid-IR, transmission',
  nir: 'Near-IR',
  'mid-ir': 'Mid-IR',
};

function verdictText(v: string): Content {
  if (v === 'pass') return { text: '✓ Pass', color: '#1d6b34', bold: true };
  if (v === 'fail') return { text: '✗ Fail', color: '#a1261b', bold: true };
  return { text: v };
}

const label = (t: string): TableCell => ({ text: t, color: '#555555' });

function kvTable(rows: [string, string | Content][]): Content {
  return {
    table: { widths: [130, '*'], body: rows.map(([k, v]) => [label(k), typeof v === 'string' ? { text: v } : v]) },
    layout: 'noBorders',
    margin: [0, 0, 0, 4],
  };
}

function section(title: string): Content {
  return { text: title, style: 'h2' };
}

function sigText(s: SignatureLine | null, tz: string): string {
  if (!s) return 'no signature on record';
  return `${s.printedName}, ${meaningWord(s.meaning).toLowerCase()}, ${formatZoned(s.signedAt, tz)}`;
}

export interface DocumentExtras {
  /** SVG of the overlay figure, or null with a reason printed instead. */
  overlaySvg: string | null;
  overlayCaption: string;
}

export function certificateDocument(c: CertificateContent, extras: DocumentExtras): TDocumentDefinitions {
  const tz = c.site.timeZone;
  const body: Content[] = [];

  body.push({
    columns: [
      {
        width: '*',
        stack: [
          { text: c.site.name, style: 'site' },
          ...(c.site.address ? [{ text: c.site.address, color: '#555555' } as Content] : []),
          { text: 'Identity certificate', style: 'h1', margin: [0, 8, 0, 0] },
          {
            text: c.lot.sampling
              ? `Infrared identity test of the ${c.lot.sampling.sampledCount} sampled containers (of ${c.lot.containerCount}) of lot ${c.lot.lotNumber}, validated reduced sampling plan`
              : `Infrared identity test of every container of lot ${c.lot.lotNumber}`,
            color: '#333333',
          },
        ],
      },
      {
        width: 180,
        stack: [
          { text: 'Certificate number', color: '#555555', alignment: 'right' },
          { text: c.number, bold: true, fontSize: 13, alignment: 'right' },
          { text: 'Issued', color: '#555555', alignment: 'right', margin: [0, 4, 0, 0] },
          { text: formatZoned(c.issuedAt, tz), alignment: 'right' },
        ],
      },
    ],
  });
  if (c.supersedes) {
    body.push({
      table: {
        widths: ['*'],
        body: [
          [
            {
              text: [
                { text: 'Supersedes certificate ', bold: true },
                { text: c.supersedes.number, bold: true },
                ` issued ${formatZoned(c.supersedes.issuedAt, tz)}. `,
                c.supersedes.reason ? `Reason: ${c.supersedes.reason}` : '',
              ],
              margin: [4, 3, 4, 3],
            },
          ],
        ],
      },
      margin: [0, 8, 0, 0],
    });
  }

  body.push(section('Material and lot'));
  body.push(
    kvTable([
      ['Material', `${c.material.name} (${c.material.code})`],
      ['Grade', asLabelled(c.material.grade)],
      ...(c.material.monographRef ? ([['Monograph', asLabelled(c.material.monographRef)]] as [string, string][]) : []),
      ['Internal lot', { text: c.lot.lotNumber, bold: true }],
      ['Supplier', c.lot.supplier],
      ['Supplier lot', c.lot.supplierLot],
      ['Received', c.lot.receivedDate],
      ['Containers', String(c.lot.containerCount)],
    ]),
  );

  body.push(section('Identity method'));
  for (const m of c.methods) {
    body.push(
      kvTable([
        ['Method', `${c.material.code} identity method, version ${m.version} (record ${m.id})`],
        ['Technique', TECHNIQUE_WORDS[m.technique] ?? m.technique],
        ...(m.rangeFrom !== null && m.rangeTo !== null
          ? ([['Spectral range', `${m.rangeTo}–${m.rangeFrom} cm⁻¹`]] as [string, string][])
          : []),
        ...(m.minCorrelation !== null
          ? ([['Minimum correlation coefficient (r)', m.minCorrelation.toFixed(4)]] as [string, string][])
          : []),
        ['Approval', sigText(m.approval, tz)],
      ]),
    );
  }

  body.push(section('Approved reference spectra used'));
  body.push({
    table: {
      headerRows: 1,
      widths: ['auto', '*', '*'],
      body: [
        [
          { text: 'Reference', style: 'th' },
          { text: 'Supplier and lot', style: 'th' },
          { text: 'Approval signature', style: 'th' },
        ],
        ...c.references.map((r) => [
          { text: r.code, bold: true, noWrap: true },
          { text: [r.supplier, r.supplierLot].filter(Boolean).join(', ') || '—' },
          { text: sigText(r.approval, tz) },
        ]),
      ],
    },
    layout: 'lightHorizontalLines',
  });

  body.push(section('Instrument and instrument check'));
  body.push({
    table: {
      headerRows: 1,
      widths: ['*', '*', '*'],
      body: [
        [
          { text: 'Instrument', style: 'th' },
          { text: 'Instrument check', style: 'th' },
          { text: 'Check signature', style: 'th' },
        ],
        ...c.instrumentChecks.map((k) => {
          const inst = c.instruments.find((i) => i.id === k.instrumentId);
          return [
            {
              text: inst
                ? `${inst.name}, serial ${inst.serialNumber}${inst.location ? `, ${inst.location}` : ''}`
                : k.instrumentName,
            },
            {
              stack: [
                { text: [`Check ${k.id}: `, verdictText(k.verdict)] },
                { text: `performed ${formatZoned(k.performedAt, tz)}` },
                ...(k.validUntil ? [{ text: `valid until ${formatZoned(k.validUntil, tz)}` }] : []),
                ...(k.spec ? [{ text: `specification ${k.spec}` }] : []),
              ],
            },
            { text: sigText(k.signature, tz) },
          ];
        }),
      ],
    },
    layout: 'lightHorizontalLines',
  });

  body.push(section('Result per container'));
  const th6 = (t: string): TableCell => ({ text: t, style: 'th', fontSize: 6.5 });
  body.push({
    table: {
      headerRows: 1,
      dontBreakRows: true,
      widths: ['*', 56, 34, 50, 34, 124],
      body: [
        [
          th6('Container'),
          th6('Measurement'),
          th6('Correlation coefficient (r)'),
          th6('Band concordance'),
          th6('Verdict'),
          th6('Raw file SHA-256'),
        ],
        ...c.containers.map((r) => [
          {
            stack: [
              { text: r.label, bold: true, noWrap: true },
              { text: r.rawFileName, fontSize: 6, color: '#555555' },
              ...(r.source === 'export-folder' ? [{ text: FROM_EXPORT_FOLDER, fontSize: 6, color: '#555555' }] : []),
            ],
          },
          { text: String(r.measurementId) },
          { text: r.matchScore === null ? '—' : r.matchScore.toFixed(4) },
          { text: r.bandsTotal === null ? 'not used' : `${r.bandsMatched} of ${r.bandsTotal}` },
          verdictText(r.verdict),
          // 64 hex digits in two lines of 32, so the column stays narrow and nothing is cut off.
          { text: `${r.rawFileSha256.slice(0, 32)}\n${r.rawFileSha256.slice(32)}`, fontSize: 6 },
        ]),
      ],
    },
    layout: 'lightHorizontalLines',
    fontSize: 7.5,
  });

  body.push(section('Spectrum overlay'));
  if (extras.overlaySvg) body.push({ svg: extras.overlaySvg, width: 515 });
  body.push({ text: extras.overlayCaption, fontSize: 7.5, color: '#555555', margin: [0, 2, 0, 0] });

  body.push(section('Electronic signatures'));
  body.push({
    table: {
      headerRows: 1,
      widths: ['*', 'auto', 'auto', '*'],
      body: [
        [
          { text: 'Printed name', style: 'th' },
          { text: 'Meaning', style: 'th' },
          { text: 'Date and time', style: 'th' },
          { text: 'Record', style: 'th' },
        ],
        ...c.signatures.map((s) => [
          { text: s.printedName, bold: true },
          { text: meaningWord(s.meaning) },
          { text: formatZoned(s.signedAt, tz), noWrap: true },
          { text: s.record },
        ]),
      ],
    },
    layout: 'lightHorizontalLines',
    unbreakable: true,
  });

  body.push(section('Conclusion'));
  body.push({
    text: [
      { text: '✓ ', color: '#1d6b34', bold: true },
      c.lot.sampling
        ? `All ${c.containers.length} sampled containers of lot ${c.lot.lotNumber} conform to the identity method: every sampled container passed and the test was verified by a second person.`
        : `All ${c.containers.length} containers of lot ${c.lot.lotNumber} conform to the identity method: every container passed and the test was verified by a second person.`,
    ],
  });
  if (c.lot.sampling)
    body.push({
      text: `Reduced sampling: ${c.lot.sampling.sampledCount} of ${c.lot.containerCount} containers were sampled and tested under the validated plan of 1 + √N containers (WHO TRS 929 Annex 4, 5.1; EU GMP Annex 8 para 2 requires the validation, recorded by QA with the supplier's qualification). This certificate states the identity of the sampled containers only: ${c.lot.sampling.sampledLabels.join(', ')}.`,
      margin: [0, 4, 0, 0],
    });
  body.push({ text: IDENTITY_ONLY_TEXT, margin: [0, 4, 0, 0] });

  body.push({
    unbreakable: true,
    margin: [0, 12, 0, 0],
    columns: [
      { width: 92, qr: c.verificationUrl, fit: 88 },
      {
        width: '*',
        stack: [
          { text: 'Caution', bold: true },
          { text: CAUTION_TEXT, margin: [0, 0, 0, 6] },
          { text: 'Verify this certificate', bold: true },
          { text: c.verificationUrl, fontSize: 7.5 },
          {
            text: `This file carries a digital signature of ${c.site.name}. Signing certificate SHA-256 fingerprint:`,
            fontSize: 7.5,
            margin: [0, 4, 0, 0],
          },
          { text: c.signingFingerprint, fontSize: 6.5 },
          {
            text: `Analysis engine ${c.engineVersions.join(', ')}.`,
            fontSize: 7.5,
            color: '#555555',
            margin: [0, 4, 0, 0],
          },
        ],
      },
    ],
  });

  return {
    pageSize: 'A4',
    pageMargins: [40, 40, 40, 44],
    info: {
      title: `Identity certificate ${c.number}`,
      subject: `Identity certificate ${c.number} for lot ${c.lot.lotNumber}`,
      author: c.site.name,
      creator: 'Drumline',
      producer: 'Drumline',
    },
    footer: (currentPage: number, pageCount: number) => ({
      columns: [
        { text: `${c.site.name} · Identity certificate ${c.number} · Lot ${c.lot.lotNumber}`, alignment: 'left' },
        { text: `Page ${currentPage} of ${pageCount}`, alignment: 'right', width: 90 },
      ],
      margin: [40, 14, 40, 0],
      fontSize: 7.5,
      color: '#555555',
    }),
    content: body,
    styles: {
      site: { fontSize: 12, bold: true },
      h1: { fontSize: 17, bold: true },
      h2: { fontSize: 10.5, bold: true, margin: [0, 12, 0, 4], color: '#0f5c6e' },
      th: { bold: true, color: '#333333' },
    },
    defaultStyle: { fontSize: 8.5, lineHeight: 1.15 },
  };
}
