/** A column heading of the audit tables: its key for the layout checks, and the table's padding. */
import type { ReactNode, ThHTMLAttributes } from 'react';

export function ColumnHead({
  column,
  className = '',
  children,
  ...rest
}: { column: string; className?: string; children: ReactNode } & ThHTMLAttributes<HTMLTableCellElement>) {
  return (
    <th
      data-key-column={column}
      scope="col"
      className={className ? `px-3 py-2 font-semibold ${className}` : 'px-3 py-2 font-semibold'}
      {...rest}
    >
      {children}
    </th>
  );
}
