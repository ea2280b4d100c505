/**
 * Container status labels (issue 14 item 4), Drumline's own layout: one label per page (A6
 * landscape, to stick on a drum), the status word across the top in letters about 2 cm high so it
 * reads from a few metres, a QR code of the container label (the same code the scanner reads on
 * the receipt label), and lot, container, material, date and signer in plain text. Printed in black
 * only: the word, not a colour, carries the status (a label printer may be monochrome).
 */
import { formatSiteTime } from '../../lib/contract';
import { type Content, renderPdf } from '../../lib/pdf';
import { CONTAINER_STATUS_WORDS, type ContainerStatus } from './contract';

export interface StatusLabel {
  containerLabel: string;
  seq: number;
  containerCount: number;
  lotNumber: string;
  material: { code: string; name: string };
  supplierLot: string;
  status: ContainerStatus;
  changedAt: string;
  changedBy: string | null;
  reason: string | null;
}

/** A6 landscape in points. */
const PAGE = { width: 419.53, height: 297.64 };

export async function statusLabelsPdf(labels: StatusLabel[], siteName: string, timeZone: string): Promise<Buffer> {
  const pages: Content[] = labels.map((l, i) => ({
    stack: [
      {
        table: {
          widths: ['*'],
          body: [
            [
              {
                text: CONTAINER_STATUS_WORDS[l.status],
                bold: true,
                fontSize: 54,
                alignment: 'center',
                margin: [0, 4, 0, 0],
              },
            ],
          ],
        },
        layout: { hLineWidth: () => 3, vLineWidth: () => 3 },
      },
      {
        columns: [
          { qr: l.containerLabel, fit: 96, eccLevel: 'M', margin: [0, 10, 0, 0] },
          {
            width: '*',
            margin: [12, 10, 0, 0],
            stack: [
              { text: l.containerLabel, bold: true, fontSize: 15 },
              {
                text: `Container ${l.seq} of ${l.containerCount} · lot ${l.lotNumber}`,
                fontSize: 10,
                margin: [0, 3, 0, 0],
              },
              { text: `${l.material.name} (${l.material.code})`, fontSize: 10, margin: [0, 3, 0, 0] },
              { text: `Supplier lot ${l.supplierLot}`, fontSize: 9, margin: [0, 2, 0, 0] },
              {
                text: `Since ${formatSiteTime(l.changedAt, timeZone)}${l.changedBy ? ` · by ${l.changedBy}` : ''}`,
                fontSize: 9,
                margin: [0, 6, 0, 0],
              },
              ...(l.reason
                ? [{ text: l.reason, fontSize: 8, margin: [0, 2, 0, 0] as [number, number, number, number] }]
                : []),
            ],
          },
        ],
      },
    ],
    pageBreak: i > 0 ? 'before' : undefined,
  }));
  return renderPdf({
    pageSize: { width: PAGE.width, height: PAGE.height },
    pageMargins: [18, 16, 18, 22],
    info: { title: `Container status labels ${labels[0]?.lotNumber ?? ''}`, creator: 'Drumline' },
    content: pages,
    footer: () => ({
      text: `${siteName} · Drumline container status label · the status in the system is the one that counts`,
      fontSize: 6,
      margin: [18, 6, 18, 0],
    }),
  });
}
