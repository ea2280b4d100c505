/** Identity certificates, sortable, with the download link on every row. */
import { createColumnHelper } from '@tanstack/react-table';
import { Link } from 'react-router-dom';
import { DataTable } from '../../../components/DataTable';
import { DateTime } from '../../../components/DateTime';
import { certificatePdfUrl, type CertificateMeta } from '../api';
import { CertificateState } from './CertificateState';

const col = createColumnHelper<CertificateMeta>();
const columns = [
  col.accessor('number', {
    header: 'Certificate',
    cell: (c) => (
      <Link
        to={`/certificates/${c.row.original.id}`}
        className="font-medium text-petrol underline-offset-2 hover:underline"
      >
        {c.getValue()}
      </Link>
    ),
  }),
  col.accessor('lotNumber', { header: 'Lot' }),
  col.accessor((c) => `${c.materialName} (${c.materialCode})`, { id: 'material', header: 'Material' }),
  col.accessor('issuedAt', { header: 'Issued', meta: { key: true }, cell: (c) => <DateTime value={c.getValue()} /> }),
  col.accessor((c) => (c.current ? 'current' : 'superseded'), {
    id: 'state',
    header: 'State',
    meta: { key: true },
    cell: (c) => <CertificateState certificate={c.row.original} />,
  }),
  col.display({
    id: 'download',
    header: 'PDF',
    cell: (c) => (
      <a
        href={certificatePdfUrl(c.row.original.id)}
        download={`${c.row.original.number}.pdf`}
        className="inline-flex min-h-9 items-center rounded-md border border-line bg-white px-3 text-sm text-ink hover:border-petrol hover:text-petrol"
        onClick={(e) => e.stopPropagation()}
        aria-label={`Download certificate ${c.row.original.number}`}
      >
        Download
      </a>
    ),
  }),
];

export function CertificatesTable({ certificates }: { certificates: CertificateMeta[] }) {
  return (
    <DataTable
      data={certificates}
      columns={columns}
      label="Identity certificates"
      initialSort={[{ id: 'issuedAt', desc: true }]}
      getRowId={(c) => String(c.id)}
      rowClassName={(c) => (c.current ? '' : 'text-muted')}
      emptyMessage="No identity certificate matches the search."
    />
  );
}
