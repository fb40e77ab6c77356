import { useState } from 'react';
import { StyleSheet, Text, View } from 'react-native';
import { router, useLocalSearchParams } from 'expo-router';
import type { ColumnDef } from '@tanstack/react-table';
import { useMe } from '../../../hooks/use-session';
import { useRunPages } from '../../../hooks/use-runs';
import { useIsWide } from '../../../hooks/use-layout';
import { Screen } from '../../../components/screen';
import { Button } from '../../../components/button';
import { Card } from '../../../components/card';
import { DataTable } from '../../../components/data-table';
import { ErrorView } from '../../../components/error-view';
import { Select } from '../../../components/select';
import { TextField } from '../../../components/text-field';
import { RunsTabs } from '../../../components/runs-tabs';
import { CompareBar, PickBox, togglePick } from '../../../components/compare-pick';
import { formatWhen } from '../../../components/format';
import { RunStatusChip } from '../../../components/run-summary';
import { SignoffChip } from '../../../components/run-review';
import { space, text } from '../../../components/theme';
import type { RunListQuery, RunSummary } from '../../../shared/runs';

type StatusFilter = 'all' | 'finished' | 'failed';
type SignoffFilter = 'all' | 'none' | 'requested' | 'approved' | 'changes-requested';

export default function Runs() {
  const me = useMe().data;
  const params = useLocalSearchParams<{ specId?: string; libraryId?: string }>();
  const [status, setStatus] = useState<StatusFilter>('all');
  const [signoff, setSignoff] = useState<SignoffFilter>('all');
  const [mine, setMine] = useState<'all' | 'mine'>('all');
  const [a, setA] = useState('');
  const [b, setB] = useState('');
  const [picked, setPicked] = useState<number[]>([]);
  const pick = (id: number) => setPicked((p) => togglePick(p, id));
  const q: Partial<RunListQuery> = {
    ...(status !== 'all' ? { status } : {}),
    ...(signoff !== 'all' ? { signoff } : {}),
    ...(mine === 'mine' && me ? { authorId: me.id } : {}),
    ...(params.specId ? { specId: Number(params.specId) } : {}),
    ...(params.libraryId ? { libraryId: Number(params.libraryId) } : {}),
  };
  const runs = useRunPages(q);
  const rows = runs.data?.pages.flatMap((pg) => pg.runs);
  const total = runs.data?.pages[0]?.total ?? 0;
  const writer = me?.role === 'researcher' || me?.role === 'admin';
  const wide = useIsWide();
  const [showFilters, setShowFilters] = useState(false);
  const filtersOn = status !== 'all' || signoff !== 'all' || mine !== 'all';

  const columns: ColumnDef<RunSummary, unknown>[] = [
    {
      id: 'pick',
      header: 'Pick',
      enableSorting: false,
      meta: { width: 52 },
      cell: ({ row }) => (
        <PickBox runId={row.original.id} checked={picked.includes(row.original.id)} finished={row.original.status === 'finished'} onToggle={() => pick(row.original.id)} />
      ),
    },
    { accessorKey: 'id', header: '#', meta: { width: 52, numeric: true } },
    {
      id: 'spec',
      // the author rides in this column (second line) so the library and factors keep room
      accessorFn: (r) => `${r.specName ?? '(unsaved spec)'} · ${r.authorName}`,
      header: 'Spec · author',
      meta: { flex: 2 },
      cell: ({ row }) => (
        <View>
          <Text style={text.body} numberOfLines={2}>
            {row.original.specName ?? '(unsaved spec)'}
          </Text>
          <Text style={text.muted}>
            {row.original.authorName} · {formatWhen(row.original.createdAt)}
          </Text>
        </View>
      ),
    },
    {
      id: 'lib',
      accessorFn: (r) => `${r.libraryName} · ed. ${r.editionNumber}`,
      header: 'Library',
      meta: { flex: 1.6 },
      // name and edition on their own lines: a long name must never clip the edition away
      cell: ({ row }) => (
        <View>
          <Text style={text.body} numberOfLines={2}>
            {row.original.libraryName}
          </Text>
          <Text style={text.muted}>edition {row.original.editionNumber}</Text>
        </View>
      ),
    },
    { id: 'factors', accessorFn: (r) => r.factors.join(', '), header: 'Factors', meta: { flex: 1.8 } },
    { id: 'nkt', accessorFn: (r) => (r.N ? `${r.N}/${r.K}/${r.T}` : '—'), header: 'N/K/T', meta: { numeric: true, width: 96 } },
    { accessorKey: 'status', header: 'State', meta: { width: 108 }, cell: ({ row }) => <RunStatusChip status={row.original.status} /> },
    { accessorKey: 'signoff', header: 'Sign-off', meta: { width: 164 }, cell: ({ row }) => <SignoffChip state={row.original.signoff} /> },
  ];

  return (
    <Screen
      title="Runs"
      subtitle="Each run estimates one model spec on one library edition; a finished run never changes."
      actions={writer ? <Button label="New model spec" variant="primary" href="/runs/new" compact /> : undefined}
      fullWidth
    >
      <RunsTabs />
      <Text style={text.muted}>Tick two finished runs to compare them side by side.</Text>
      {!wide ? (
        <Button
          compact
          variant="quiet"
          label={showFilters ? 'Hide filters' : `Filters${filtersOn ? ' (on)' : ''}`}
          onPress={() => setShowFilters((v) => !v)}
          style={{ alignSelf: 'flex-start' }}
        />
      ) : null}
      {wide || showFilters ? (
      <Card title="Filter">
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
          <View style={styles.filter}>
          <Select<StatusFilter> label="State" value={status} options={[{ value: 'all', label: 'all' }, { value: 'finished', label: 'finished' }, { value: 'failed', label: 'failed' }]} onChange={setStatus} />
          </View>
          <View style={styles.filter}>
          <Select<SignoffFilter>
            label="Sign-off"
            value={signoff}
            options={[
              { value: 'all', label: 'all' },
              { value: 'requested', label: 'requested' },
              { value: 'approved', label: 'approved' },
              { value: 'changes-requested', label: 'changes requested' },
              { value: 'none', label: 'none asked' },
            ]}
            onChange={setSignoff}
          />
          </View>
          <View style={styles.filter}>
          <Select<'all' | 'mine'> label="Author" value={mine} options={[{ value: 'all', label: 'anyone' }, { value: 'mine', label: 'me' }]} onChange={setMine} />
          </View>
        </View>
        {params.specId ? <Text style={text.muted}>Showing runs of spec #{params.specId}. <Text onPress={() => router.replace('/runs')} style={{ textDecorationLine: 'underline' }}>Show all</Text></Text> : null}
      </Card>
      ) : params.specId ? (
        <Text style={text.muted}>Showing runs of spec #{params.specId}. <Text onPress={() => router.replace('/runs')} style={{ textDecorationLine: 'underline' }}>Show all</Text></Text>
      ) : null}
      {runs.isError ? <ErrorView error={runs.error} title="Runs could not be loaded" onRetry={() => void runs.refetch()} /> : null}
      {rows ? (
        <DataTable
          label="Runs"
          data={rows}
          columns={columns}
          filterable
          getRowId={(r) => String(r.id)}
          onRowPress={(r) => router.push(`/runs/${r.id}`)}
          emptyTitle="No runs match"
          emptyBody={writer ? 'Start one from New model spec.' : 'Researchers start runs; they appear here.'}
          renderCard={(r) => (
            <Card title={`#${r.id} ${r.specName ?? '(unsaved spec)'}`} subtitle={`${r.libraryName} · edition ${r.editionNumber} · ${r.authorName}`}>
              <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
                <RunStatusChip status={r.status} />
                <SignoffChip state={r.signoff} />
              </View>
              <Text style={text.muted}>
                {r.factors.join(', ')}
                {r.N ? ` · N ${r.N} · K ${r.K} · T ${r.T}` : ''} · {formatWhen(r.createdAt)}
              </Text>
              <View style={{ flexDirection: 'row', gap: space.md, flexWrap: 'wrap', alignItems: 'center', justifyContent: 'space-between' }}>
                <Button label={`Open run ${r.id}`} compact href={`/runs/${r.id}`} />
                <PickBox runId={r.id} checked={picked.includes(r.id)} finished={r.status === 'finished'} onToggle={() => pick(r.id)} withText />
              </View>
            </Card>
          )}
        />
      ) : null}
      {rows && rows.length > 0 ? (
        <View style={{ flexDirection: 'row', gap: space.md, alignItems: 'center', flexWrap: 'wrap' }}>
          <Text style={text.muted} role="status" aria-label="Runs shown">
            {rows.length} of {total} runs
          </Text>
          {runs.hasNextPage ? (
            <Button label={runs.isFetchingNextPage ? 'Loading…' : 'Show more'} compact onPress={() => void runs.fetchNextPage()} disabled={runs.isFetchingNextPage} />
          ) : null}
        </View>
      ) : null}
      <CompareBar picked={picked} onClear={() => setPicked([])} />
      <Card title="Compare by run number" subtitle="Or type two run numbers. Ledgers, J and pricing errors side by side; a drop test when one model nests the other on the same data.">
        <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'flex-end', flexWrap: 'wrap' }}>
          <View style={{ width: 130 }}>
            <TextField label="Run A" value={a} onChangeText={setA} numeric inputMode="numeric" />
          </View>
          <View style={{ width: 130 }}>
            <TextField label="Run B" value={b} onChangeText={setB} numeric inputMode="numeric" />
          </View>
          <Button label="Compare" disabled={!/^\d+$/.test(a) || !/^\d+$/.test(b) || a === b} onPress={() => router.push({ pathname: '/runs/compare', params: { a, b } })} />
        </View>
      </Card>
    </Screen>
  );
}

const styles = StyleSheet.create({ filter: { maxWidth: '100%', flexShrink: 1 } });
