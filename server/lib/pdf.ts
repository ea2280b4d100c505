/**
 * Server-side PDF rendering with pdfmake 0.3 (bundling pdfkit). One place sets the fonts the
 * application ships (DejaVu Sans from public/fonts, TrueType, embedded as subsets) and the
 * access policies: pdfmake may read only the font folder and never fetch a URL, so a document
 * definition cannot make the server read other files or call out. Reused by every module that
 * prints (identity certificates, container labels, audit reports).
 */
import path from 'node:path';
import fs from 'node:fs';
import pdfmake from 'pdfmake';
import type { TDocumentDefinitions } from 'pdfmake/interfaces';
import { repoRoot } from '../../db/config';

export type { Content, TableCell, TDocumentDefinitions } from 'pdfmake/interfaces';

export const FONT_DIR = path.join(repoRoot, 'public', 'fonts');
export const PDF_FONT = 'DejaVuSans';

const FONT_FILES = {
  normal: 'DejaVuSans.ttf',
  bold: 'DejaVuSans-Bold.ttf',
  italics: 'DejaVuSans-Oblique.ttf',
  bolditalics: 'DejaVuSans-BoldOblique.ttf',
} as const;

let configured = false;

function configure(): void {
  if (configured) return;
  const files = Object.fromEntries(Object.entries(FONT_FILES).map(([k, f]) => [k, path.join(FONT_DIR, f)])) as Record<keyof typeof FONT_FILES, string>;
  for (const f of Object.values(files)) {
    if (!fs.existsSync(f)) throw new Error(`PDF font missing: ${path.relative(repoRoot, f)} (the fonts ship in public/fonts).`);
  }
  pdfmake.setFonts({ [PDF_FONT]: files });
  const fontRoot = FONT_DIR + path.sep;
  pdfmake.setUrlAccessPolicy(() => false);
  pdfmake.setLocalAccessPolicy((p: string) => path.resolve(p).startsWith(fontRoot));
  configured = true;
}

/** Renders a pdfmake document definition to PDF bytes. The default font is DejaVu Sans. */
export async function renderPdf(docDefinition: TDocumentDefinitions): Promise<Buffer> {
  configure();
  const def: TDocumentDefinitions = {
    ...docDefinition,
    defaultStyle: { font: PDF_FONT, ...(docDefinition.defaultStyle ?? {}) },
  };
  const out = await pdfmake.createPdf(def).getBuffer();
  return Buffer.isBuffer(out) ? out : Buffer.from(out);
}
