import { createColumnHelper } from '@tanstack/react-table';
import { StyleSheet, Text, View } from 'react-native';
import { SERIES_KIND_LABELS, type EditionSeriesInfo } from '../shared/libraries';
import { Card } from './card';
import { DataTable, type DataColumnMeta } from './data-table';
import { LibraryStats } from './library-stats';
import { formatNum } from './num';
import { colors, fonts, space, text } from './theme';

const col = createColumnHelper<EditionSeriesInfo>();

function kindLabel(s: EditionSeriesInfo): string {
  return s.kind === 'factor' ? `Factor (${s.traded ? 'traded' : 'not traded'})` : SERIES_KIND_LABELS[s.kind];
}

/** A compact, one-line, tabular number cell (four decimals for values, whole numbers for counts). */
function numCell(value: number | null, decimals: number) {
  return (
    <Text style={styles.num} numberOfLines={1}>
      {decimals === 0 && value !== null ? String(value) : formatNum(value, decimals)}
    </Text>
  );
}

const value = (id: 'mean' | 'sd' | 'min' | 'max', header: string) =>
  col.accessor((s) => s.stats[id], { id, header, meta: { numeric: true, width: 80 } satisfies DataColumnMeta, cell: (c) => numCell(c.getValue(), 4), sortUndefined: 'last' });

const columns = [
  col.accessor('name', { header: 'Series', meta: { flex: 1.4 } satisfies DataColumnMeta }),
  col.accessor((s) => kindLabel(s), { id: 'kind', header: 'Kind', meta: { flex: 1.2 } satisfies DataColumnMeta }),
  col.accessor((s) => s.stats.count, { id: 'n', header: 'n', meta: { numeric: true, width: 60 } satisfies DataColumnMeta, cell: (c) => numCell(c.getValue(), 0) }),
  col.accessor((s) => s.stats.missing, { id: 'missing', header: 'Missing', meta: { numeric: true, width: 84 } satisfies DataColumnMeta, cell: (c) => numCell(c.getValue(), 0) }),
  value('mean', 'Mean'),
  value('sd', 'SD'),
  value('min', 'Min'),
  value('max', 'Max'),
];

/** Sortable, filterable, paginated table of an edition's series (cards on phones). Values are decimals. */
export function LibrarySeriesTable({ series }: { series: readonly EditionSeriesInfo[] }) {
  return (
    <DataTable<EditionSeriesInfo>
      label="Series"
      data={series}
      columns={columns}
      getRowId={(s) => s.name}
      filterable
      filterLabel="Filter series"
      pageSize={15}
      renderCard={(s) => (
        <Card>
          <View style={{ flexDirection: 'row', justifyContent: 'space-between', gap: space.sm, flexWrap: 'wrap' }}>
            <Text style={text.strong}>{s.name}</Text>
            <Text style={text.muted}>{kindLabel(s)}</Text>
          </View>
          <LibraryStats stats={s.stats} />
        </Card>
      )}
    />
  );
}

const styles = StyleSheet.create({
  num: { fontFamily: fonts.mono, fontSize: 13, color: colors.ink, textAlign: 'right', fontVariant: ['tabular-nums'] },
});
