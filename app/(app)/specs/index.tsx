import { Text } from 'react-native';
import { router } from 'expo-router';
import type { ColumnDef } from '@tanstack/react-table';
import { useMe } from '../../../hooks/use-session';
import { useSpecs } from '../../../hooks/use-specs';
import { Screen } from '../../../components/screen';
import { Button } from '../../../components/button';
import { Card } from '../../../components/card';
import { DataTable } from '../../../components/data-table';
import { ErrorView } from '../../../components/error-view';
import { RunsTabs } from '../../../components/runs-tabs';
import { formatWhen } from '../../../components/format';
import { text } from '../../../components/theme';
import type { SavedSpec } from '../../../shared/specs';

export default function Specs() {
  const me = useMe().data;
  const q = useSpecs(false);
  const writer = me?.role === 'researcher' || me?.role === 'admin';
  const columns: ColumnDef<SavedSpec, unknown>[] = [
    { accessorKey: 'name', header: 'Spec', meta: { flex: 2 } },
    { id: 'lib', accessorFn: (s) => `${s.libraryName} · ed. ${s.editionNumber}`, header: 'Library', meta: { flex: 2 } },
    { id: 'nk', accessorFn: (s) => `${s.spec.assets.length}/${s.spec.factors.length}`, header: 'N/K', meta: { numeric: true, width: 88 } },
    { accessorKey: 'authorName', header: 'Author' },
    // one line: the date and time never wrap away from "UTC"
    { id: 'when', accessorFn: (s) => s.updatedAt, header: 'Saved', meta: { width: 190 }, cell: ({ row }) => formatWhen(row.original.updatedAt) },
  ];
  return (
    <Screen title="Model specs" subtitle="Saved choices of test assets, factors and options." actions={writer ? <Button label="New model spec" variant="primary" href="/runs/new" /> : undefined}>
      <RunsTabs />
      {q.isError ? <ErrorView error={q.error} title="Specs could not be loaded" onRetry={() => void q.refetch()} /> : null}
      {q.data ? (
        <DataTable
          label="Model specs"
          data={q.data}
          columns={columns}
          filterable
          getRowId={(s) => String(s.id)}
          onRowPress={(s) => router.push(`/specs/${s.id}`)}
          emptyTitle="No specs yet"
          emptyBody={writer ? 'Create one with New model spec.' : 'Researchers create specs; they appear here.'}
          renderCard={(s) => (
            <Card title={s.name} subtitle={`${s.libraryName} · edition ${s.editionNumber}`}>
              <Text style={text.muted}>
                N {s.spec.assets.length} · K {s.spec.factors.length} · {s.authorName} · {formatWhen(s.updatedAt)}
              </Text>
              <Button label="Open" compact href={`/specs/${s.id}`} />
            </Card>
          )}
        />
      ) : null}
    </Screen>
  );
}
