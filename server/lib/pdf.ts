/**
 * Server-side PDF rendering with pdfmake 0.3 (bundling pdfkit). One place sets the fonts the
 * application ships (DejaVu Sans from public/fonts, TrueType, embedded as subsets) and the
 * access policies: pdfmake may read only the font folder and never fetch a URL, so a document
 * definition cannot make the server read other files or call out. Reused by every module that
 * prints (identity certificates, container labels, audit reports).
 */
import fs from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
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

/** What this module relies on of pdfkit's embedded font (pdfkit 0.19 as bundled by pdfmake 0.3). */
interface EmbeddedFontLike {
  font: { createSubset(): unknown; postscriptName: string };
  subset: unknown;
  layoutCache?: Record<string, unknown>;
}

const MAX_SHARED_LAYOUTS = 20_000;

/**
 * pdfkit opens every font anew for every document: it reads the file, parses it with fontkit
 * and starts with empty shaping caches, and with DejaVu Sans (large OpenType layout tables)
 * that is most of the time a small document takes. Here the parsed font and the per-word layout
 * cache are shared by all documents: after pdfmake's provideFont has made the document's
 * embedded font, the font object is swapped for the one parsed first (same file, read-only for
 * layout), with a fresh subset of it for this document. Layout runs hold glyph ids, code points
 * and scaled advances only, identical for every document using the same font.
 */
function shareParsedFonts(): void {
  const req = createRequire(import.meta.url);
  const pdfDocumentPath = path.join(path.dirname(req.resolve('pdfmake')), 'PDFDocument.js');
  const PDFDocument = (req(pdfDocumentPath) as { default: { prototype: Record<string, unknown> } }).default;
  const proto = PDFDocument.prototype as {
    provideFont: (f: string, b: boolean, i: boolean) => EmbeddedFontLike;
    __drumlineShared?: boolean;
  };
  if (proto.__drumlineShared) return;
  const original = proto.provideFont;
  const shared = new Map<string, { font: EmbeddedFontLike['font']; layouts: Record<string, unknown>; count: number }>();
  proto.provideFont = function provideFont(
    this: {
      fontCache: Record<string, Record<string, EmbeddedFontLike>>;
      getFontFile(f: string, b: boolean, i: boolean): unknown;
      getFontType(b: boolean, i: boolean): string;
    },
    familyName: string,
    bold: boolean,
    italics: boolean,
  ) {
    const type = this.getFontType(bold, italics);
    const fresh = !this.fontCache[familyName]?.[type];
    const ef = original.call(this, familyName, bold, italics);
    const file = this.getFontFile(familyName, bold, italics);
    if (!fresh || typeof file !== 'string') return ef;
    let entry = shared.get(file);
    if (!entry) {
      entry = { font: ef.font, layouts: Object.create(null) as Record<string, unknown>, count: 0 };
      shared.set(file, entry);
    } else {
      ef.font = entry.font;
      ef.subset = entry.font.createSubset();
    }
    if (ef.layoutCache) {
      if (++entry.count > MAX_SHARED_LAYOUTS / 100) {
        entry.count = 0;
        if (Object.keys(entry.layouts).length > MAX_SHARED_LAYOUTS)
          entry.layouts = Object.create(null) as Record<string, unknown>;
      }
      ef.layoutCache = entry.layouts;
    }
    return ef;
  };
  Object.defineProperty(proto, '__drumlineShared', { value: true });
}

function configure(): void {
  if (configured) return;
  const files = Object.fromEntries(Object.entries(FONT_FILES).map(([k, f]) => [k, path.join(FONT_DIR, f)])) as Record<
    keyof typeof FONT_FILES,
    string
  >;
  for (const f of Object.values(files)) {
    if (!fs.existsSync(f))
      throw new Error(`PDF font missing: ${path.relative(repoRoot, f)} (the fonts ship in public/fonts).`);
  }
  shareParsedFonts();
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
