import { useState, type ReactNode } from 'react';
import { Pressable, StyleSheet, Text, View, type ViewStyle } from 'react-native';
import {
  getCoreRowModel,
  getFilteredRowModel,
  getPaginationRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnDef,
  type Row,
  type SortingState,
} from '@tanstack/react-table';
import { useIsWide } from '../hooks/use-layout';
import { Button } from './button';
import { EmptyState } from './empty-state';
import { TextField } from './text-field';
import { colors, fonts, radius, space, text } from './theme';

/** Per-column extras read by DataTable (put in `meta` of a ColumnDef). */
export interface DataColumnMeta {
  /** Right-aligned, tabular number column. */
  numeric?: boolean;
  /** Flex weight of the column (default 1). */
  flex?: number;
  /** Fixed width in px (overrides flex). */
  width?: number;
}

export interface DataTableProps<T> {
  /** Accessible name of the table (e.g. "Users"). */
  label: string;
  data: readonly T[];
  columns: ColumnDef<T, any>[]; // eslint-disable-line @typescript-eslint/no-explicit-any
  /** How one row looks as a card at phone width; without it phones get the table too. */
  renderCard?: (row: T) => ReactNode;
  getRowId?: (row: T, index: number) => string;
  /** Show a filter box (matches any column's text). */
  filterable?: boolean;
  filterLabel?: string;
  pageSize?: number;
  initialSort?: SortingState;
  onRowPress?: (row: T) => void;
  selectedRowId?: string;
  emptyTitle?: string;
  emptyBody?: string;
}

function cellNode(node: ReactNode, numeric?: boolean): ReactNode {
  if (typeof node === 'string' || typeof node === 'number') {
    return (
      <Text style={[numeric ? styles.num : text.body, styles.wrapText]} numberOfLines={3}>
        {String(node)}
      </Text>
    );
  }
  return node ?? null;
}

/**
 * Header/cell renderer: functions are called (not mounted as components), so a function that returns
 * a string gets the app's text style; do not call hooks inside column `cell`/`header` functions.
 */
function renderPart<C>(part: unknown, ctx: C): ReactNode {
  return typeof part === 'function' ? (part as (c: C) => ReactNode)(ctx) : (part as ReactNode);
}

/** Default cell: the value as text in the app's faces (TanStack's own default would render bare text). */
function DefaultCell({ value, numeric }: { value: unknown; numeric?: boolean }) {
  if (value === null || value === undefined || value === '') return <Text style={text.muted}>{'\u2014'}</Text>;
  return <>{cellNode(typeof value === 'number' ? value : String(value), numeric)}</>;
}

function colStyle(meta: DataColumnMeta | undefined): ViewStyle {
  if (meta?.width) return { width: meta.width, flexGrow: 0, flexShrink: 0 };
  return { flex: meta?.flex ?? 1, minWidth: 0 };
}

/**
 * TanStack Table v8 wrapper: sortable headers (aria-sort), sticky header, text filter, pagination.
 * At phone width it renders each row through `renderCard` when given.
 */
export function DataTable<T>(props: DataTableProps<T>) {
  const { label, data, columns, renderCard, getRowId, filterable, pageSize = 25, initialSort = [], onRowPress, selectedRowId } = props;
  const wide = useIsWide();
  const [sorting, setSorting] = useState<SortingState>(initialSort);
  const [filter, setFilter] = useState('');
  const table = useReactTable<T>({
    data: data as T[],
    columns,
    state: { sorting, globalFilter: filter },
    onSortingChange: setSorting,
    onGlobalFilterChange: setFilter,
    getRowId,
    defaultColumn: {
      cell: (info) => <DefaultCell value={info.getValue()} numeric={(info.column.columnDef.meta as DataColumnMeta | undefined)?.numeric} />,
    },
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    getPaginationRowModel: getPaginationRowModel(),
    initialState: { pagination: { pageIndex: 0, pageSize } },
    autoResetPageIndex: true,
  });
  const rows = table.getRowModel().rows;
  const total = table.getFilteredRowModel().rows.length;
  const asCards = !wide && !!renderCard;
  const pageCount = table.getPageCount();

  const rowPress = (r: Row<T>) => (onRowPress ? () => onRowPress(r.original) : undefined);

  return (
    <View style={{ gap: space.sm }}>
      {filterable ? (
        <TextField label={props.filterLabel ?? `Filter ${label.toLowerCase()}`} value={filter} onChangeText={setFilter} placeholder="Type to filter" />
      ) : null}
      {data.length === 0 ? (
        <EmptyState title={props.emptyTitle ?? 'Nothing here yet'} body={props.emptyBody} />
      ) : total === 0 ? (
        <EmptyState title="No rows match the filter" body={`Nothing in ${label.toLowerCase()} contains "${filter}".`} />
      ) : asCards ? (
        <View role="list" aria-label={label} style={{ gap: space.sm }}>
          {rows.map((r) => (
            <View role="listitem" key={r.id}>
              {renderCard!(r.original)}
            </View>
          ))}
        </View>
      ) : (
        <View role="table" aria-label={label} style={styles.table}>
          {table.getHeaderGroups().map((hg) => (
            <View role="row" key={hg.id} style={[styles.row, styles.headRow]}>
              {hg.headers.map((h) => {
                const meta = h.column.columnDef.meta as DataColumnMeta | undefined;
                const sorted = h.column.getIsSorted();
                const canSort = h.column.getCanSort();
                const title = renderPart(h.column.columnDef.header, h.getContext());
                return (
                  <View
                    key={h.id}
                    role="columnheader"
                    aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : canSort ? 'none' : undefined}
                    style={[styles.cell, colStyle(meta)]}
                  >
                    <Pressable
                      disabled={!canSort}
                      onPress={h.column.getToggleSortingHandler()}
                      role={canSort ? 'button' : undefined}
                      aria-label={canSort ? `Sort by ${typeof title === 'string' ? title : h.column.id}` : undefined}
                      style={[styles.headPress, meta?.numeric && { justifyContent: 'flex-end' }]}
                    >
                      <Text style={styles.headText} numberOfLines={2}>
                        {title}
                      </Text>
                      <Text style={styles.sortMark} aria-hidden>
                        {sorted === 'asc' ? '\u25B2' : sorted === 'desc' ? '\u25BC' : canSort ? '\u21C5' : ''}
                      </Text>
                    </Pressable>
                  </View>
                );
              })}
            </View>
          ))}
          {rows.map((r) => {
            const selected = selectedRowId !== undefined && r.id === selectedRowId;
            const cells = r.getVisibleCells().map((c) => {
              const meta = c.column.columnDef.meta as DataColumnMeta | undefined;
              return (
                <View key={c.id} role="cell" style={[styles.cell, colStyle(meta), meta?.numeric && { alignItems: 'flex-end' }]}>
                  {cellNode(renderPart(c.column.columnDef.cell, c.getContext()), meta?.numeric)}
                </View>
              );
            });
            return onRowPress ? (
              <Pressable key={r.id} role="row" onPress={rowPress(r)} aria-selected={selected} style={[styles.row, selected && styles.selected]}>
                {cells}
              </Pressable>
            ) : (
              <View key={r.id} role="row" style={styles.row}>
                {cells}
              </View>
            );
          })}
        </View>
      )}
      {pageCount > 1 ? (
        <View style={styles.pager}>
          <Button label="Previous" compact onPress={() => table.previousPage()} disabled={!table.getCanPreviousPage()} accessibilityLabel={`Previous page of ${label.toLowerCase()}`} />
          <Text style={text.muted}>
            Page {table.getState().pagination.pageIndex + 1} of {pageCount} · {total} rows
          </Text>
          <Button label="Next" compact onPress={() => table.nextPage()} disabled={!table.getCanNextPage()} accessibilityLabel={`Next page of ${label.toLowerCase()}`} />
        </View>
      ) : data.length > 0 ? (
        <Text style={text.muted}>{total === data.length ? `${total} rows` : `${total} of ${data.length} rows`}</Text>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  table: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md, backgroundColor: colors.card },
  row: { flexDirection: 'row', borderBottomWidth: 1, borderBottomColor: colors.rule, alignItems: 'center' },
  headRow: {
    position: 'sticky' as ViewStyle['position'],
    top: 0,
    zIndex: 1,
    backgroundColor: colors.paper,
    borderTopLeftRadius: radius.md,
    borderTopRightRadius: radius.md,
  },
  selected: { backgroundColor: colors.brassTint },
  cell: { paddingHorizontal: space.md, paddingVertical: space.sm, justifyContent: 'center', overflow: 'hidden' },
  wrapText: { wordBreak: 'break-word' } as object,
  headPress: { flexDirection: 'row', alignItems: 'center', gap: 4, minHeight: 28 },
  headText: { fontFamily: fonts.textStrong, fontSize: 13, color: colors.slate },
  sortMark: { fontSize: 10, color: colors.slate, width: 12 },
  num: { fontFamily: fonts.mono, fontSize: 15, color: colors.ink, textAlign: 'right', fontVariant: ['tabular-nums'] },
  pager: { flexDirection: 'row', alignItems: 'center', gap: space.md, flexWrap: 'wrap' },
});
