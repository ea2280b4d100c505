/**
 * Sortable, filterable table on @tanstack/react-table.
 * - Click a header (or focus it and press Enter) to sort; again to reverse.
 * - globalFilter: one search box over all columns; columnFilters: a box under each header
 *   (a column can opt out with `enableColumnFilter: false`).
 * - onRowClick: rows become focusable buttons: Enter/Space opens, arrow keys move between rows.
 * Column `meta: { align: 'right' }` right-aligns numbers (tabular figures are on for tables).
 * Key columns (the record's number and what a decision rests on: status, verdict, due date) carry
 * data-key-column in the markup: the first column always, others with `meta: { key: true }`. The
 * layout test (e2e/layout.spec.ts) checks they are inside the viewport at 1280 x 800. When the table
 * is wider than the page it scrolls inside a ScrollRegion (keyboard reachable, a visible hint) and
 * its first column stays in place (sticky).
 */
import { useMemo, useRef, useState, type KeyboardEvent, type ReactNode } from 'react';
import { ScrollRegion } from './ScrollRegion';
import {
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnDef,
  type ColumnFiltersState,
  type ColumnMeta,
  type RowData,
  type SortingState,
} from '@tanstack/react-table';

declare module '@tanstack/react-table' {
  // Kept: a module augmentation must repeat the interface's type parameters exactly (same names),
  // although these extra fields use neither.
  // eslint-disable-next-line @typescript-eslint/no-unused-vars
  interface ColumnMeta<TData extends RowData, TValue> {
    align?: 'left' | 'right' | 'center';
    /** header cell class (widths) */
    className?: string;
    /** let long text wrap in this column's cells, badges included (text columns that are not key columns wrap anyway) */
    wrap?: boolean;
    /** keep this column's cells on one line (the default for key columns and right-aligned numbers) */
    nowrap?: boolean;
    /** a decision-relevant column that must stay in view at 1280 px (the first column always is) */
    key?: boolean;
  }
}

export interface DataTableProps<T> {
  data: T[];
  // Kept: the columns of one table hold different value types (string, number, ...), and a
  // ColumnDef<T, string> is not assignable to ColumnDef<T, unknown>, so the array needs any here.
  // eslint-disable-next-line @typescript-eslint/no-explicit-any
  columns: ColumnDef<T, any>[];
  /** accessible name of the table */
  label: string;
  /** show a search box over all columns; a string sets its placeholder */
  globalFilter?: boolean | string;
  /** show a filter box under each filterable header */
  columnFilters?: boolean;
  initialSort?: SortingState;
  onRowClick?: (row: T) => void;
  getRowId?: (row: T, index: number) => string;
  /** highlights the row with this id */
  selectedRowId?: string;
  /** shown when there are no rows at all (before filtering) */
  emptyMessage?: ReactNode;
  /** extra controls placed beside the search box */
  toolbar?: ReactNode;
  /** row classes from the row (e.g. a muted inactive row) */
  rowClassName?: (row: T) => string;
  className?: string;
}

const ALIGN = { left: 'text-left', right: 'text-right', center: 'text-center' };

/**
 * Which columns stay on one line: key columns (they must be read at a glance) and numbers; other
 * text wraps, so that a table fits a 1280 px screen without hiding its key columns.
 */
function keepOnOneLine(meta: ColumnMeta<unknown, unknown> | undefined, index: number): boolean {
  if (meta?.nowrap) return true;
  if (meta?.wrap) return false;
  return index === 0 || meta?.key === true || meta?.align === 'right';
}

function SortMark({ dir }: { dir: false | 'asc' | 'desc' }) {
  return (
    <span aria-hidden className={`ml-1 inline-block w-3 text-xs ${dir ? 'text-petrol' : 'text-line'}`}>
      {dir === 'asc' ? '▲' : dir === 'desc' ? '▼' : '↕'}
    </span>
  );
}

export function DataTable<T>({
  data,
  columns,
  label,
  globalFilter,
  columnFilters,
  initialSort = [],
  onRowClick,
  getRowId,
  selectedRowId,
  emptyMessage = 'No records.',
  toolbar,
  rowClassName,
  className = '',
}: DataTableProps<T>) {
  const [sorting, setSorting] = useState<SortingState>(initialSort);
  const [filter, setFilter] = useState('');
  const [colFilters, setColFilters] = useState<ColumnFiltersState>([]);
  const bodyRef = useRef<HTMLTableSectionElement>(null);

  const table = useReactTable({
    data,
    columns,
    state: { sorting, globalFilter: filter, columnFilters: colFilters },
    onSortingChange: setSorting,
    onGlobalFilterChange: setFilter,
    onColumnFiltersChange: setColFilters,
    getRowId,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    globalFilterFn: 'includesString',
  });
  const rows = table.getRowModel().rows;
  const placeholder = typeof globalFilter === 'string' ? globalFilter : 'Search in all columns';
  const filtered = filter !== '' || colFilters.length > 0;
  const countText = useMemo(
    () =>
      filtered
        ? `${rows.length} of ${data.length} shown`
        : `${data.length} ${data.length === 1 ? 'record' : 'records'}`,
    [filtered, rows.length, data.length],
  );

  const onRowKey = (e: KeyboardEvent<HTMLTableRowElement>, row: T) => {
    if (e.key === 'Enter' || e.key === ' ') {
      e.preventDefault();
      onRowClick?.(row);
    } else if (e.key === 'ArrowDown' || e.key === 'ArrowUp') {
      e.preventDefault();
      const sib = (
        e.key === 'ArrowDown' ? e.currentTarget.nextElementSibling : e.currentTarget.previousElementSibling
      ) as HTMLElement | null;
      sib?.focus();
    } else if (e.key === 'Home' || e.key === 'End') {
      e.preventDefault();
      const all = bodyRef.current?.querySelectorAll<HTMLElement>('tr[tabindex]');
      (e.key === 'Home' ? all?.[0] : all?.[all.length - 1])?.focus();
    }
  };

  return (
    <div className={`flex min-w-0 flex-col gap-2 ${className}`}>
      {(globalFilter || toolbar) && (
        <div className="flex flex-wrap items-center gap-2">
          {globalFilter && (
            <input
              type="search"
              value={filter}
              onChange={(e) => setFilter(e.target.value)}
              placeholder={placeholder}
              aria-label={`${placeholder} (${label})`}
              className="min-h-9 w-72 max-w-full rounded-md border border-line bg-white px-3 text-sm focus:border-petrol focus:ring-2 focus:ring-petrol-soft focus:outline-none"
            />
          )}
          {toolbar}
          <span className="ml-auto text-sm text-muted" aria-live="polite">
            {countText}
          </span>
        </div>
      )}
      <ScrollRegion label={label}>
        <table className="w-full border-collapse text-sm" aria-label={label}>
          <thead className="bg-paper">
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id} className="border-b border-line">
                {hg.headers.map((h, i) => {
                  const meta = h.column.columnDef.meta;
                  // Headers wrap between words (except the first column's), cells as keepOnOneLine says.
                  const oneLine = i === 0 || meta?.nowrap === true;
                  const align = ALIGN[meta?.align ?? 'left'];
                  const canSort = h.column.getCanSort();
                  const dir = h.column.getIsSorted();
                  return (
                    <th
                      key={h.id}
                      scope="col"
                      data-key-column={i === 0 || meta?.key ? h.column.id : undefined}
                      aria-sort={
                        dir === 'asc' ? 'ascending' : dir === 'desc' ? 'descending' : canSort ? 'none' : undefined
                      }
                      className={`px-2.5 py-2 align-top font-semibold text-ink ${oneLine ? 'whitespace-nowrap' : ''} ${align} ${i === 0 ? 'dt-sticky' : ''} ${meta?.className ?? ''}`}
                    >
                      {h.isPlaceholder ? null : canSort ? (
                        <button
                          type="button"
                          onClick={h.column.getToggleSortingHandler()}
                          className="inline-flex items-center font-semibold hover:text-petrol"
                        >
                          {flexRender(h.column.columnDef.header, h.getContext())}
                          <SortMark dir={dir} />
                        </button>
                      ) : (
                        flexRender(h.column.columnDef.header, h.getContext())
                      )}
                      {columnFilters && h.column.getCanFilter() && (
                        <input
                          type="search"
                          value={(h.column.getFilterValue() as string | undefined) ?? ''}
                          onChange={(e) => h.column.setFilterValue(e.target.value || undefined)}
                          aria-label={`Filter ${typeof h.column.columnDef.header === 'string' ? h.column.columnDef.header : h.column.id}`}
                          placeholder="Filter"
                          className="mt-1 block min-h-7 w-full min-w-16 rounded border border-line bg-white px-2 text-xs font-normal focus:border-petrol focus:outline-none"
                        />
                      )}
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody ref={bodyRef}>
            {rows.map((row) => {
              const selected = selectedRowId !== undefined && row.id === selectedRowId;
              return (
                <tr
                  key={row.id}
                  tabIndex={onRowClick ? 0 : undefined}
                  onClick={onRowClick ? () => onRowClick(row.original) : undefined}
                  onKeyDown={onRowClick ? (e) => onRowKey(e, row.original) : undefined}
                  aria-selected={selectedRowId !== undefined ? selected : undefined}
                  className={`border-b border-line last:border-b-0 ${onRowClick ? 'cursor-pointer hover:bg-petrol-soft/60 focus:bg-petrol-soft focus:outline-none' : ''} ${
                    selected ? 'bg-petrol-soft' : ''
                  } ${rowClassName?.(row.original) ?? ''}`}
                >
                  {row.getVisibleCells().map((cell, i) => (
                    <td
                      key={cell.id}
                      data-key-column={i === 0 || cell.column.columnDef.meta?.key ? cell.column.id : undefined}
                      className={`px-2.5 py-2 align-top ${keepOnOneLine(cell.column.columnDef.meta, i) ? 'whitespace-nowrap' : 'break-words'} ${cell.column.columnDef.meta?.wrap ? 'dt-wrap' : ''} ${ALIGN[cell.column.columnDef.meta?.align ?? 'left']} ${i === 0 ? 'dt-sticky' : ''}`}
                    >
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  ))}
                </tr>
              );
            })}
            {rows.length === 0 && (
              <tr>
                <td colSpan={table.getVisibleLeafColumns().length} className="px-3 py-6 text-center text-muted">
                  {data.length === 0 ? emptyMessage : 'No records match the filter.'}
                </td>
              </tr>
            )}
          </tbody>
        </table>
      </ScrollRegion>
    </div>
  );
}
