import { createColumnHelper } from '@tanstack/react-table';
import { Text, View } from 'react-native';
import { SERIES_KIND_LABELS, type EditionSeriesInfo } from '../shared/libraries';
import { Card } from './card';
import { DataTable, type DataColumnMeta } from './data-table';
import { LibraryStats } from './library-stats';
import { formatNum } from './num';
import { space, text } from './theme';

const col = createColumnHelper<EditionSeriesInfo>();
const NUM: DataColumnMeta = { numeric: true, flex: 1 };

function kindLabel(s: EditionSeriesInfo): string {
  return s.kind === 'factor' ? `Factor (${s.traded ? 'traded' : 'not traded'})` : SERIES_KIND_LABELS[s.kind];
}

const columns = [
  col.accessor('name', { header: 'Series', meta: { flex: 2 } satisfies DataColumnMeta }),
  col.accessor((s) => kindLabel(s), { id: 'kind', header: 'Kind', meta: { flex: 1.6 } satisfies DataColumnMeta }),
  col.accessor((s) => s.stats.count, { id: 'n', header: 'n', meta: { numeric: true, flex: 0.8 } satisfies DataColumnMeta }),
  col.accessor((s) => s.stats.missing, { id: 'missing', header: 'Missing', meta: { numeric: true, flex: 1.4 } satisfies DataColumnMeta }),
  col.accessor((s) => s.stats.mean, { id: 'mean', header: 'Mean', meta: NUM, cell: (c) => formatNum(c.getValue(), 4), sortUndefined: 'last' }),
  col.accessor((s) => s.stats.sd, { id: 'sd', header: 'SD', meta: NUM, cell: (c) => formatNum(c.getValue(), 4) }),
  col.accessor((s) => s.stats.min, { id: 'min', header: 'Min', meta: NUM, cell: (c) => formatNum(c.getValue(), 4) }),
  col.accessor((s) => s.stats.max, { id: 'max', header: 'Max', meta: NUM, cell: (c) => formatNum(c.getValue(), 4) }),
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
