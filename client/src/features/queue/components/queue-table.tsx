import { flexRender, getCoreRowModel, useReactTable } from '@tanstack/react-table';
import type { Virtualizer } from '@tanstack/react-virtual';
import type { RefObject } from 'react';
import type { QueueRow } from '@shared/schemas/queue';
import { QUEUE_ROW_PX } from '@client/features/queue/hooks/use-queue-scroll';
import type { GroupedRow } from '@client/features/queue/lib/event-groups';
import type { queueColumns } from './queue-columns';

/** Fixed column widths, px (the reasons column takes the rest), so the table fits 1280–1440 px screens. */
const columnPx: Record<string, number | undefined> = { flag: 148, score: 52, station: 64, windowStart: 158, createdAt: 60, state: 150, group: 136 };

/** Columns of figures, codes and times: IBM Plex Mono with tabular digits. */
const monoColumns = new Set(['score', 'station', 'windowStart', 'createdAt']);

/** Props of <QueueTable>. */
type QueueTableProps = {
  rows: QueueRow[];
  /** Each row's place (item, event group's row, member beneath it). */
  placeOf: ReadonlyMap<number, GroupedRow<QueueRow>>;
  columns: ReturnType<typeof queueColumns>;
  selectedId: number | null;
  sort: 'score' | 'age';
  virtual: Virtualizer<HTMLDivElement, Element>;
  scrollRef: RefObject<HTMLDivElement | null>;
  onScroll: () => void;
  onSelect: (index: number) => void;
  onOpen: (row: QueueRow) => void;
  fetchingMore: boolean;
};

/**
 * The queue's table: fixed-height one-line rows drawn by the virtualiser (only those in view exist
 * in the page, so 10 000 rows stay smooth), the selected row marked, returned items marked at the
 * edge, an event group's row (`data-role="group"`) with its member windows (`data-role="member"`,
 * shaded) beneath it when expanded.
 */
export function QueueTable({ rows, placeOf, columns, selectedId, sort, virtual, scrollRef, onScroll, onSelect, onOpen, fetchingMore }: QueueTableProps) {
  const table = useReactTable({ data: rows, columns, getCoreRowModel: getCoreRowModel(), getRowId: (r) => String(r.id) });
  const items = virtual.getVirtualItems();
  const padTop = items[0]?.start ?? 0;
  const padBottom = virtual.getTotalSize() - (items[items.length - 1]?.end ?? 0);
  return (
    <div ref={scrollRef} onScroll={onScroll} role="region" aria-label="Queue items" tabIndex={0} className="min-h-0 flex-1 overflow-auto rounded-sm border border-line bg-surface">
      <table className="w-full table-fixed border-collapse text-sm" aria-rowcount={rows.length + 1}>
        <caption className="sr-only">Queue items, {sort === 'score' ? 'highest score first' : 'oldest first'}. Use J and K to move, Enter to open.</caption>
        <colgroup>
          {table.getVisibleLeafColumns().map((col) => (
            <col key={col.id} style={columnPx[col.id] ? { width: columnPx[col.id] } : undefined} />
          ))}
        </colgroup>
        <thead className="sticky top-0 z-[1] bg-raised">
          {table.getHeaderGroups().map((g) => (
            <tr key={g.id}>
              {g.headers.map((h) => (
                <th key={h.id} scope="col" className={h.column.id === 'flag' ? 'h-7 px-2 text-left text-sm leading-tight font-semibold text-ink' : 'h-7 px-2 text-left text-sm leading-tight font-medium text-ink-muted'}>
                  {flexRender(h.column.columnDef.header, h.getContext())}
                </th>
              ))}
            </tr>
          ))}
        </thead>
        <tbody>
          {padTop > 0 ? <tr aria-hidden="true" style={{ height: padTop }} /> : null}
          {items.map((v) => {
            const row = table.getRowModel().rows[v.index];
            if (!row) return null;
            const r = row.original;
            const selected = r.id === selectedId;
            const role = placeOf.get(r.id)?.role ?? 'item';
            return (
              <tr
                key={row.id}
                data-item-id={r.id}
                data-state={r.state}
                data-role={role}
                aria-rowindex={v.index + 2}
                aria-current={selected ? 'true' : undefined}
                style={{ height: QUEUE_ROW_PX }}
                onClick={() => onSelect(v.index)}
                onDoubleClick={() => onOpen(r)}
                className={
                  selected
                    ? 'cursor-pointer border-b border-line bg-accent-wash shadow-[inset_3px_0_0_var(--sf-accent)]'
                    : r.state === 'returned'
                      ? 'cursor-pointer border-b border-line shadow-[inset_3px_0_0_var(--sf-state-returned)] hover:bg-raised'
                      : role === 'member'
                        ? 'cursor-pointer border-b border-line bg-raised'
                        : 'cursor-pointer border-b border-line hover:bg-raised'
                }
              >
                {row.getVisibleCells().map((cell) => (
                  <td key={cell.id} className={monoColumns.has(cell.column.id) ? 'overflow-hidden px-2 font-mono text-sm whitespace-nowrap tabular-nums' : 'overflow-hidden px-2 whitespace-nowrap'}>
                    {flexRender(cell.column.columnDef.cell, cell.getContext())}
                  </td>
                ))}
              </tr>
            );
          })}
          {padBottom > 0 ? <tr aria-hidden="true" style={{ height: padBottom }} /> : null}
        </tbody>
      </table>
      {fetchingMore ? <p className="p-2 text-sm text-ink-muted">Loading more…</p> : null}
    </div>
  );
}
