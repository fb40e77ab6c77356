import { useMemo } from 'react';
import { Text } from 'react-native';
import { createColumnHelper } from '@tanstack/react-table';
import type { AuditEntry } from '../../../api/admin';
import { useAdminUsers, useAuditLog } from '../../../hooks/use-admin';
import { Card } from '../../../components/card';
import { DataTable } from '../../../components/data-table';
import { ErrorView } from '../../../components/error-view';
import { formatWhen } from '../../../components/format';
import { Screen } from '../../../components/screen';
import { TeamTabs } from '../../../components/team-tabs';
import { fonts, text } from '../../../components/theme';

const col = createColumnHelper<AuditEntry & { who: string }>();

export default function TeamAudit() {
  const audit = useAuditLog();
  const users = useAdminUsers();
  const rows = useMemo(() => {
    const names = new Map((users.data ?? []).map((u) => [u.id, u.name]));
    return (audit.data ?? []).map((e) => ({ ...e, who: e.userId === null ? '—' : (names.get(e.userId) ?? `user ${e.userId}`) }));
  }, [audit.data, users.data]);
  const columns = useMemo(
    () => [
      col.accessor('createdAt', { header: 'When', cell: (c) => <Text style={[text.num, { fontSize: 13 }]}>{formatWhen(c.getValue())}</Text>, meta: { width: 200 } }),
      col.accessor('who', { header: 'Who', meta: { flex: 0.8 } }),
      col.accessor('action', { header: 'Action', cell: (c) => <Text style={{ fontFamily: fonts.mono, fontSize: 13 }}>{c.getValue()}</Text>, meta: { flex: 0.9 } }),
      col.accessor((e) => e.detail ?? '', { id: 'detail', header: 'Detail', cell: (c) => <Text style={[text.muted, { fontFamily: fonts.mono }]} numberOfLines={3}>{c.getValue() || '—'}</Text>, meta: { flex: 1.6 } }),
    ],
    [],
  );
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
          pageSize={50}
          initialSort={[{ id: 'createdAt', desc: true }]}
          renderCard={(e) => (
            <Card>
              <Text style={[text.strong, { fontFamily: fonts.mono }]}>{e.action}</Text>
              <Text style={text.muted}>
                {formatWhen(e.createdAt)} · {e.who}
              </Text>
              {e.detail ? <Text style={[text.muted, { fontFamily: fonts.mono }]}>{e.detail}</Text> : null}
            </Card>
          )}
        />
      ) : null}
    </Screen>
  );
}
