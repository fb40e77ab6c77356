import { useMemo } from 'react';
import { Text, View } from 'react-native';
import { createColumnHelper } from '@tanstack/react-table';
import { describeAuditEntry, type AuditEntry, type AuditText } from '../../../shared/audit';
import { useAdminUsers, useAuditLog } from '../../../hooks/use-admin';
import { Button } from '../../../components/button';
import { Card } from '../../../components/card';
import { DataTable } from '../../../components/data-table';
import { ErrorView } from '../../../components/error-view';
import { formatWhen } from '../../../components/format';
import { Screen } from '../../../components/screen';
import { TeamTabs } from '../../../components/team-tabs';
import { fonts, space, text } from '../../../components/theme';

type Row = AuditEntry & { who: string; words: AuditText; search: string };
const col = createColumnHelper<Row>();

/** The entry in words: its sentence, or `key: value` lines for a kind without one. */
function Words({ words }: { words: AuditText }) {
  if (words.sentence) return <Text style={text.body}>{words.sentence}</Text>;
  if (words.lines.length === 0) return <Text style={text.muted}>—</Text>;
  return (
    <View style={{ gap: 2 }}>
      {words.lines.map((l, i) => (
        <Text key={i} style={text.muted}>
          {l}
        </Text>
      ))}
    </View>
  );
}

export default function TeamAudit() {
  const audit = useAuditLog();
  const users = useAdminUsers();
  const rows = useMemo<Row[]>(() => {
    const names = new Map((users.data ?? []).map((u) => [u.id, u.name]));
    const entries = audit.data?.pages.flatMap((p) => p.entries) ?? [];
    return entries.map((e) => {
      const words = describeAuditEntry(e, { user: (id) => names.get(id) });
      const who = e.userId === null ? '—' : (names.get(e.userId) ?? `user ${e.userId}`);
      return { ...e, who, words, search: words.sentence ?? words.lines.join(' ') };
    });
  }, [audit.data, users.data]);
  const columns = useMemo(
    () => [
      col.accessor('createdAt', { header: 'When', cell: (c) => <Text style={[text.num, { fontSize: 13 }]}>{formatWhen(c.getValue())}</Text>, meta: { width: 180 } }),
      col.accessor('who', { header: 'Who', meta: { width: 150 } }),
      col.accessor('search', { header: 'What happened', cell: (c) => <Words words={c.row.original.words} />, enableSorting: false, meta: { flex: 2.4 } }),
      col.accessor('action', { header: 'Kind', cell: (c) => <Text style={{ fontFamily: fonts.mono, fontSize: 12, color: '#4A5E70' }}>{c.getValue()}</Text>, meta: { width: 190 } }),
    ],
    [],
  );
  const loaded = rows.length;
  return (
    <Screen title="Team" subtitle="Audit log: sign-ins, role changes, invitations and other changes, newest first.">
      <TeamTabs />
      {audit.isError ? <ErrorView error={audit.error} onRetry={() => void audit.refetch()} /> : null}
      {audit.isPending ? <Text style={text.muted}>Loading the audit log…</Text> : null}
      {audit.data ? (
        <DataTable
          label="Audit log"
          data={rows}
          columns={columns}
          getRowId={(e) => String(e.id)}
          filterable
          filterLabel="Filter the loaded entries"
          // Paging is the server's ("Load older" below); every loaded entry stays on screen.
          pageSize={Number.MAX_SAFE_INTEGER}
          emptyTitle="Nothing recorded yet"
          emptyBody="Sign-ins, invitations and changes appear here as they happen."
          renderCard={(e) => (
            <Card>
              <Words words={e.words} />
              {/* A sentence already names who did it; lines do not, so the name comes with them. */}
              <Text style={text.muted}>
                {formatWhen(e.createdAt)} · {e.words.sentence ? '' : `${e.who} · `}
                <Text style={{ fontFamily: fonts.mono }}>{e.action}</Text>
              </Text>
            </Card>
          )}
        />
      ) : null}
      {audit.data ? (
        <View style={{ gap: space.sm, alignItems: 'flex-start' }}>
          {audit.isFetchNextPageError ? <ErrorView error={audit.error} title="Older entries could not be loaded" /> : null}
          {audit.hasNextPage ? (
            <Button label="Load older" onPress={() => audit.fetchNextPage()} busy={audit.isFetchingNextPage} accessibilityLabel="Load older audit entries" />
          ) : loaded > 0 ? (
            <Text style={text.muted} role="status">
              That is the whole log: {loaded} {loaded === 1 ? 'entry' : 'entries'}, back to the first.
            </Text>
          ) : null}
        </View>
      ) : null}
    </Screen>
  );
}
