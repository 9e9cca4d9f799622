import type { ComponentPropsWithRef, ReactNode } from 'react';
import { cx } from '@client/lib/cx';

/**
 * Dense table primitives: plain <table> elements with Seisift's look, so TanStack Table (or a hand
 * list) renders into them. Rows are 28 px; figures go in <Td figure> (mono, tabular, right-aligned).
 */

/** Props of <Table>: native table props plus an accessible caption (shown, or for screen readers only). */
export type TableProps = ComponentPropsWithRef<'table'> & { caption: string; captionHidden?: boolean };

/** The table, with its caption. Wrap wide tables in <TableScroll>. */
export function Table({ caption, captionHidden, className, children, ...rest }: TableProps) {
  return (
    <table className={cx('w-full border-collapse text-base', className)} {...rest}>
      <caption className={cx('pb-1.5 text-left text-sm text-ink-muted', captionHidden && 'sr-only')}>{caption}</caption>
      {children}
    </table>
  );
}

/** Props of <TableScroll>: `label` names the scroll region for screen readers. */
export type TableScrollProps = ComponentPropsWithRef<'div'> & { label: string };

/**
 * A scroll box for a table: keeps the header in view (sticky) and scrolls both ways. It is a
 * focusable, labelled region so keyboard users can scroll it with the arrow keys.
 */
export function TableScroll({ className, label, ...rest }: TableScrollProps) {
  return (
    <div role="region" aria-label={label} tabIndex={0} className={cx('overflow-auto rounded-sm border border-line bg-surface', className)} {...rest} />
  );
}

/** Props of <ScrollTable>: those of <Table>, the scroll region's `label`, the header row(s) in `head`. */
export type ScrollTableProps = TableProps & { label: string; head: ReactNode; scrollClassName?: string };

/**
 * The usual data table: a <Table> with its sticky <THead> (`head`) and its <TBody> (the children,
 * its rows) inside a labelled <TableScroll>.
 */
export function ScrollTable({ label, head, scrollClassName, children, ...table }: ScrollTableProps) {
  return (
    <TableScroll label={label} className={scrollClassName}>
      <Table {...table}>
        <THead>{head}</THead>
        <TBody>{children}</TBody>
      </Table>
    </TableScroll>
  );
}

/** Table head (sticky inside <TableScroll>). */
export function THead({ className, ...rest }: ComponentPropsWithRef<'thead'>) {
  return <thead className={cx('sticky top-0 z-[1] bg-raised', className)} {...rest} />;
}

/** Table body. */
export function TBody(props: ComponentPropsWithRef<'tbody'>) {
  return <tbody {...props} />;
}

/** Props of <Tr>: `selected` marks the row the keyboard cursor is on (aria-current="true"). */
export type TrProps = ComponentPropsWithRef<'tr'> & { selected?: boolean };

/** A row. A selected row gets the accent wash and a bar on its left edge (not colour alone). */
export function Tr({ selected, className, ...rest }: TrProps) {
  return (
    <tr
      aria-current={selected ? 'true' : undefined}
      className={cx(
        'h-7 border-b border-line last:border-b-0',
        selected ? 'bg-accent-wash shadow-[inset_3px_0_0_var(--sf-accent)]' : 'hover:bg-raised',
        className,
      )}
      {...rest}
    />
  );
}

/** Props of <Th>/<Td>: `figure` for numbers and times (mono, tabular, right-aligned). */
export type CellProps<T extends 'th' | 'td'> = ComponentPropsWithRef<T> & { figure?: boolean };

/** A header cell; `scope` defaults to "col". Pass `aria-sort` on sortable columns. */
export function Th({ figure, className, scope = 'col', ...rest }: CellProps<'th'>) {
  return (
    <th
      scope={scope}
      className={cx(
        'h-7 px-2 text-sm font-medium whitespace-nowrap text-ink-muted',
        figure ? 'text-right' : 'text-left',
        className,
      )}
      {...rest}
    />
  );
}

/** A data cell. */
export function Td({ figure, className, ...rest }: CellProps<'td'>) {
  return <td className={cx('px-2 py-0.5 align-middle', figure && 'text-right font-mono tabular text-sm', className)} {...rest} />;
}

/** The header of a column of row actions (buttons): named for screen readers, blank on screen. */
export function ThActions() {
  return (
    <Th>
      <span className="sr-only">Actions</span>
    </Th>
  );
}
