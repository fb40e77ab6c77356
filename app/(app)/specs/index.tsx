import { useState } from 'react';
import { Pressable, StyleSheet, Text, View } from 'react-native';
import { router } from 'expo-router';
import type { ColumnDef } from '@tanstack/react-table';
import { useMe } from '../../../hooks/use-session';
import { useArchiveSpec, useSpecs } from '../../../hooks/use-specs';
import { Screen } from '../../../components/screen';
import { Button } from '../../../components/button';
import { Card } from '../../../components/card';
import { Chip } from '../../../components/chip';
import { DataTable } from '../../../components/data-table';
import { ErrorView } from '../../../components/error-view';
import { RunsTabs } from '../../../components/runs-tabs';
import { formatWhen } from '../../../components/format';
import { colors, fonts, radius, space, text } from '../../../components/theme';
import type { SavedSpec } from '../../../shared/specs';
import type { User } from '../../../shared/auth';

const mayArchive = (me: User | null | undefined, s: SavedSpec) => !!me && (me.role === 'admin' || (me.role === 'researcher' && s.authorId === me.id));

/** Saved specs, archived ones hidden unless asked for; the author or an admin archives and restores from the list. */
export default function Specs() {
  const me = useMe().data;
  const [showArchived, setShowArchived] = useState(false);
  const q = useSpecs({ archived: showArchived });
  const archive = useArchiveSpec();
  const writer = me?.role === 'researcher' || me?.role === 'admin';

  const archiveButton = (s: SavedSpec) => {
    if (!mayArchive(me, s)) return null;
    const archived = s.archivedAt !== null;
    return (
      <Button
        label={archived ? 'Restore' : 'Archive'}
        compact
        variant="quiet"
        accessibilityLabel={`${archived ? 'Restore' : 'Archive'} spec ${s.name}`}
        onPress={() => archive.mutateAsync({ id: s.id, archived: !archived }).catch(() => undefined)}
      />
    );
  };

  const columns: ColumnDef<SavedSpec, unknown>[] = [
    {
      accessorKey: 'name',
      header: 'Spec',
      meta: { flex: 2 },
      cell: ({ row }) => (
        <View style={styles.nameCell}>
          <Text style={[text.body, { flexShrink: 1 }]} numberOfLines={2}>
            {row.original.name}
          </Text>
          {row.original.archivedAt ? <Chip label="archived" tone="fog" shape="dashed" /> : null}
        </View>
      ),
    },
    { id: 'lib', accessorFn: (s) => `${s.libraryName} · ed. ${s.editionNumber}`, header: 'Library', meta: { flex: 2 } },
    { id: 'nk', accessorFn: (s) => `${s.spec.assets.length}/${s.spec.factors.length}`, header: 'N/K', meta: { numeric: true, width: 88 } },
    { accessorKey: 'authorName', header: 'Author' },
    // one line: the date and time never wrap away from "UTC"
    { id: 'when', accessorFn: (s) => s.updatedAt, header: 'Saved', meta: { width: 190 }, cell: ({ row }) => formatWhen(row.original.updatedAt) },
    ...(writer ? [{ id: 'archive', header: '', enableSorting: false, meta: { width: 120 }, cell: ({ row }) => archiveButton(row.original) } satisfies ColumnDef<SavedSpec, unknown>] : []),
  ];
  return (
    <Screen title="Model specs" subtitle="Saved choices of test assets, factors and options." actions={writer ? <Button label="New model spec" variant="primary" href="/runs/new" /> : undefined}>
      <RunsTabs />
      <Pressable
        role="switch"
        aria-checked={showArchived}
        aria-label="Show archived specs"
        onPress={() => setShowArchived((v) => !v)}
        style={[styles.switch, showArchived && styles.switchOn]}
      >
        <Text style={styles.switchMark} aria-hidden>
          {showArchived ? '☑' : '☐'}
        </Text>
        <Text style={[text.body, showArchived && { fontFamily: fonts.textStrong }]}>Show archived specs</Text>
        {q.isFetching && q.isPlaceholderData ? <Text style={text.muted}> · loading…</Text> : null}
      </Pressable>
      {archive.isError ? <ErrorView error={archive.error} title="The spec was not changed" /> : null}
      {q.isError ? <ErrorView error={q.error} title="Specs could not be loaded" onRetry={() => void q.refetch()} /> : null}
      {q.data ? (
        <DataTable
          label="Model specs"
          data={q.data}
          columns={columns}
          filterable
          getRowId={(s) => String(s.id)}
          onRowPress={(s) => router.push(`/specs/${s.id}`)}
          emptyTitle={showArchived ? 'No specs yet' : 'No specs listed'}
          emptyBody={writer ? 'Create one with New model spec, or show archived specs.' : 'Researchers create specs; they appear here.'}
          renderCard={(s) => (
            <Card title={s.name} subtitle={`${s.libraryName} · edition ${s.editionNumber}`} aside={s.archivedAt ? <Chip label="archived" tone="fog" shape="dashed" /> : undefined}>
              <Text style={text.muted}>
                N {s.spec.assets.length} · K {s.spec.factors.length} · {s.authorName} · {formatWhen(s.updatedAt)}
              </Text>
              <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
                <Button label="Open" compact href={`/specs/${s.id}`} />
                {archiveButton(s)}
              </View>
            </Card>
          )}
        />
      ) : null}
    </Screen>
  );
}

const styles = StyleSheet.create({
  nameCell: { flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' },
  switch: {
    flexDirection: 'row',
    alignItems: 'center',
    gap: space.sm,
    alignSelf: 'flex-start',
    minHeight: 40,
    paddingHorizontal: space.md,
    borderWidth: 1,
    borderColor: colors.rule,
    borderRadius: radius.sm,
    backgroundColor: colors.card,
  },
  switchOn: { borderColor: colors.brass, backgroundColor: colors.brassTint },
  switchMark: { fontSize: 16, color: colors.ink },
});
