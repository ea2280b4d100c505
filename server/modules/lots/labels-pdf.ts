/**
 * Container label sheet: A4, 3 x 7 labels per page, each with a QR code of the container label
 * (pdfmake's built-in QR node; a scanner reads the label and types it followed by Enter) and
 * the label in plain text, so a person can read and type it too.
 */
import { renderPdf, type TableCell } from '../../lib/pdf';
import type { LotSummary } from './contract';

const COLUMNS = 3;
const ROWS = 7;
const PAGE_MARGIN_X = 20;
const PAGE_MARGIN_Y = 28;
const A4 = { width: 595.28, height: 841.89 };

export async function labelSheetPdf(
  lot: LotSummary,
  containers: { seq: number; label: string }[],
  printedBy: string,
  siteName: string,
): Promise<Buffer> {
  const labelWidth = (A4.width - 2 * PAGE_MARGIN_X) / COLUMNS;
  const labelHeight = Math.floor((A4.height - 2 * PAGE_MARGIN_Y) / ROWS) - 1;
  const cell = (c: { seq: number; label: string }): TableCell => ({
    stack: [
      { text: c.label, bold: true, fontSize: 10.5, margin: [0, 0, 0, 3] },
      {
        columns: [
          { qr: c.label, fit: 70, eccLevel: 'M' },
          {
            width: '*',
            stack: [
              { text: lot.material.name, fontSize: 8 },
              {
                text: `${lot.material.code}${lot.material.grade ? ` · ${lot.material.grade}` : ''}`,
                fontSize: 7,
                color: '#444444',
              },
              { text: `Supplier lot ${lot.supplierLot}`, fontSize: 7, color: '#444444', margin: [0, 2, 0, 0] },
              { text: `Container ${c.seq} of ${lot.containerCount}`, fontSize: 8, margin: [0, 2, 0, 0] },
              { text: 'QUARANTINE', bold: true, fontSize: 8, margin: [0, 3, 0, 0] },
            ],
          },
        ],
        columnGap: 6,
      },
    ],
    margin: [8, 6, 4, 4],
  });
  const body: TableCell[][] = [];
  for (let i = 0; i < containers.length; i += COLUMNS) {
    const row: TableCell[] = containers.slice(i, i + COLUMNS).map(cell);
    while (row.length < COLUMNS) row.push({ text: '' });
    body.push(row);
  }
  return renderPdf({
    pageSize: 'A4',
    pageMargins: [PAGE_MARGIN_X, PAGE_MARGIN_Y, PAGE_MARGIN_X, PAGE_MARGIN_Y],
    info: {
      title: `Container labels ${lot.lotNumber}`,
      subject: `${lot.material.name}, ${lot.containerCount} containers`,
      creator: 'Drumline',
    },
    content: [
      {
        table: { widths: Array(COLUMNS).fill(labelWidth - 1), heights: labelHeight, body, dontBreakRows: true },
        layout: {
          hLineWidth: () => 0.3,
          vLineWidth: () => 0.3,
          hLineColor: () => '#bbbbbb',
          vLineColor: () => '#bbbbbb',
          paddingLeft: () => 0,
          paddingRight: () => 0,
          paddingTop: () => 0,
          paddingBottom: () => 0,
        },
      },
    ],
    footer: (page: number, pages: number) => ({
      text: `${siteName} · container labels of lot ${lot.lotNumber} · printed by ${printedBy} · page ${page} of ${pages}`,
      fontSize: 6,
      color: '#666666',
      margin: [PAGE_MARGIN_X, 8, PAGE_MARGIN_X, 0],
    }),
  });
}
