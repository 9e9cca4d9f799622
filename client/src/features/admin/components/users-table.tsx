import {
  createColumnHelper,
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnFiltersState,
  type FilterFn,
  type SortingState,
} from '@tanstack/react-table';
import { useMemo, useState } from 'react';
import { roleLabels, roles, type Role } from '@shared/auth/roles';
import type { AdminUser, StationOption } from '@shared/auth/schemas';
import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { Select } from '@client/components/ui/select';
import { ScrollTable, Td, Th, Tr } from '@client/components/ui/table';

/** Props of <UsersTable>. */
export type UsersTableProps = {
  users: AdminUser[];
  stations: StationOption[];
  /** The signed-in admin (they cannot deactivate themselves). */
  selfId: string;
  onEditAccess: (user: AdminUser) => void;
  onSetActive: (user: AdminUser, active: boolean) => void;
  busy?: boolean;
};

const column = createColumnHelper<AdminUser>();

/** Whether a column's meta marks it as a figure column (mono, right-aligned). */
const isFigure = (meta: unknown): boolean => typeof meta === 'object' && meta !== null && 'figure' in meta && meta.figure === true;

const hasRole: FilterFn<AdminUser> = (row, _id, value: unknown) => value === '' || (typeof value === 'string' && row.original.roles.some((r) => r === value));
/** A column filter's value as the select shows it (the filters hold strings; nothing set is ''). */
const filterText = (value: unknown): string => (typeof value === 'string' ? value : '');
const statusIs: FilterFn<AdminUser> = (row, _id, value: unknown) =>
  value === '' || (value === 'active' ? row.original.active : value === 'deactivated' ? !row.original.active : value === 'no-password' ? !row.original.hasPassword : true);

/** The users table: sortable by any column, filterable by text, role and status (TanStack Table). */
export function UsersTable({ users, stations, selfId, onEditAccess, onSetActive, busy }: UsersTableProps) {
  const [sorting, setSorting] = useState<SortingState>([{ id: 'email', desc: false }]);
  const [globalFilter, setGlobalFilter] = useState('');
  const [columnFilters, setColumnFilters] = useState<ColumnFiltersState>([]);
  const stationCode = useMemo(() => new Map(stations.map((s) => [s.id, `${s.network}.${s.code}`])), [stations]);

  const columns = useMemo(
    () => [
      column.accessor('displayName', { header: 'Name' }),
      column.accessor('email', { header: 'E-mail', cell: (c) => <span className="font-mono text-sm">{c.getValue()}</span> }),
      column.accessor((u) => u.roles.join(' '), {
        id: 'roles',
        header: 'Roles',
        filterFn: hasRole,
        cell: (c) => (
          <ul className="flex flex-wrap gap-1" aria-label="Roles">
            {c.row.original.roles.length ? c.row.original.roles.map((r: Role) => (
              <li key={r}>
                <Badge tone="accent">
                  <span title={roleLabels[r]}>{r}</span>
                </Badge>
              </li>
            )) : <li className="text-sm text-ink-muted">none</li>}
          </ul>
        ),
      }),
      column.accessor((u) => u.stationIds.map((id) => stationCode.get(id) ?? String(id)).join(', '), {
        id: 'stations',
        header: 'Stations',
        cell: (c) => <span className="font-mono text-sm">{c.getValue() || '—'}</span>,
      }),
      column.accessor((u) => (u.active ? (u.hasPassword ? 'active' : 'no password') : 'deactivated'), {
        id: 'status',
        header: 'Status',
        filterFn: statusIs,
        cell: (c) => <Badge tone={c.row.original.active ? 'ok' : 'danger'}>{c.getValue()}</Badge>,
      }),
      column.accessor('sessions', { header: 'Sessions', meta: { figure: true } }),
      column.accessor('createdAt', { header: 'Created (UTC)', meta: { figure: true } }),
      column.display({
        id: 'actions',
        header: () => <span className="sr-only">Actions</span>,
        cell: (c) => {
          const u = c.row.original;
          return (
            <div className="flex justify-end gap-1">
              <Button size="sm" onClick={() => onEditAccess(u)} aria-label={`Access of ${u.displayName}`} title="Roles and stations">
                Access
              </Button>
              {u.active ? (
                <Button size="sm" variant="danger" disabled={busy || u.id === selfId} onClick={() => onSetActive(u, false)} aria-label={`Deactivate ${u.displayName}`}>
                  Deactivate
                </Button>
              ) : (
                <Button size="sm" disabled={busy} onClick={() => onSetActive(u, true)} aria-label={`Reactivate ${u.displayName}`}>
                  Reactivate
                </Button>
              )}
            </div>
          );
        },
      }),
    ],
    [stationCode, onEditAccess, onSetActive, busy, selfId],
  );

  const table = useReactTable({
    data: users,
    columns,
    state: { sorting, globalFilter, columnFilters },
    onSortingChange: setSorting,
    onGlobalFilterChange: setGlobalFilter,
    onColumnFiltersChange: setColumnFilters,
    globalFilterFn: 'includesString',
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
  });
  const roleFilter = table.getColumn('roles');
  const statusFilter = table.getColumn('status');
  const rows = table.getRowModel().rows;

  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-end gap-3">
        <FormField label="Find" className="w-64">
          {(p) => <Input {...p} type="search" placeholder="name, e-mail, station…" value={globalFilter} onChange={(e) => setGlobalFilter(e.target.value)} />}
        </FormField>
        <FormField label="Role" className="w-48">
          {(p) => (
            <Select {...p} value={filterText(roleFilter?.getFilterValue())} onChange={(e) => roleFilter?.setFilterValue(e.target.value)}>
              <option value="">Any role</option>
              {roles.map((r) => (
                <option key={r} value={r}>
                  {roleLabels[r]}
                </option>
              ))}
            </Select>
          )}
        </FormField>
        <FormField label="Status" className="w-44">
          {(p) => (
            <Select {...p} value={filterText(statusFilter?.getFilterValue())} onChange={(e) => statusFilter?.setFilterValue(e.target.value)}>
              <option value="">Any status</option>
              <option value="active">Active</option>
              <option value="deactivated">Deactivated</option>
              <option value="no-password">No password yet</option>
            </Select>
          )}
        </FormField>
        <p className="pb-1.5 text-sm text-ink-muted" aria-live="polite">
          {rows.length} of {users.length} users
        </p>
      </div>
      <ScrollTable
        label="Users" caption="Users of this Seisift, with roles, stations and status" captionHidden
        head={
          <>
            {table.getHeaderGroups().map((hg) => (
              <Tr key={hg.id}>
                {hg.headers.map((h) => {
                  const sorted = h.column.getIsSorted();
                  const figure = isFigure(h.column.columnDef.meta);
                  return (
                    <Th key={h.id} figure={figure} aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : h.column.getCanSort() ? 'none' : undefined}>
                      {h.column.getCanSort() ? (
                        <button type="button" className="inline-flex items-center gap-1 font-medium" onClick={h.column.getToggleSortingHandler()}>
                          {flexRender(h.column.columnDef.header, h.getContext())}
                          <span aria-hidden="true" className="font-mono">{sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}</span>
                        </button>
                      ) : (
                        flexRender(h.column.columnDef.header, h.getContext())
                      )}
                    </Th>
                  );
                })}
              </Tr>
            ))}
          </>
        }
      >
        {rows.length === 0 ? (
          <Tr>
            <Td colSpan={columns.length} className="py-3 text-ink-muted">
              No user matches these filters.
            </Td>
          </Tr>
        ) : (
          rows.map((row) => (
            <Tr key={row.id}>
              {row.getVisibleCells().map((cell) => (
                <Td key={cell.id} figure={isFigure(cell.column.columnDef.meta)}>
                  {flexRender(cell.column.columnDef.cell, cell.getContext())}
                </Td>
              ))}
            </Tr>
          ))
        )}
      </ScrollTable>
    </div>
  );
}
