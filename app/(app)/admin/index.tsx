import { useMemo, useState } from 'react';
import { StyleSheet, Text, View } from 'react-native';
import { createColumnHelper } from '@tanstack/react-table';
import type { AdminUser } from '../../../shared/auth';
import { ROLE_LABELS, ROLES, type Role } from '../../../shared/roles';
import { useAdminUsers, useUpdateUser } from '../../../hooks/use-admin';
import { useMe } from '../../../hooks/use-session';
import { useIsWide } from '../../../hooks/use-layout';
import { Button } from '../../../components/button';
import { Card } from '../../../components/card';
import { Chip } from '../../../components/chip';
import { DataTable } from '../../../components/data-table';
import { ErrorView } from '../../../components/error-view';
import { formatWhen } from '../../../components/format';
import { Screen } from '../../../components/screen';
import { Select } from '../../../components/select';
import { TeamTabs } from '../../../components/team-tabs';
import { space, text } from '../../../components/theme';

const ROLE_OPTIONS = ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }));
const col = createColumnHelper<AdminUser>();

function StatusChip({ active }: { active: boolean }) {
  return active ? <Chip label="active" shape="filled" tone="kelp" /> : <Chip label="deactivated" shape="dashed" tone="fog" />;
}

function UserEditor({ user, me, onClose }: { user: AdminUser; me: number; onClose: () => void }) {
  const update = useUpdateUser();
  const [role, setRole] = useState<Role>(user.role);
  const [confirming, setConfirming] = useState(false);
  const self = user.id === me;
  return (
    <Card title={user.name} subtitle={user.email} aside={<StatusChip active={user.active} />} accessibilityLabel={`Edit ${user.name}`}>
      <Select label={`Role of ${user.name}`} value={role} options={ROLE_OPTIONS} onChange={setRole} disabled={update.isPending} />
      <View style={styles.actions}>
        <Button
          label="Save role"
          variant="primary"
          compact
          disabled={role === user.role}
          busy={update.isPending && !confirming}
          onPress={() => update.mutateAsync({ id: user.id, role })}
        />
        {user.active ? (
          confirming ? null : (
            <Button label="Deactivate…" variant="danger" compact onPress={() => setConfirming(true)} accessibilityLabel={`Deactivate ${user.name}`} />
          )
        ) : (
          <Button label="Reactivate" compact onPress={() => update.mutateAsync({ id: user.id, active: true })} busy={update.isPending} />
        )}
        <Button label="Close" variant="quiet" compact onPress={onClose} />
      </View>
      {confirming ? (
        <View style={styles.confirm} role="alertdialog" aria-label="Confirm deactivation">
          <Text style={text.body}>
            Deactivate {user.name}? {self ? 'This is your own account: you will lose access. ' : ''}They can no longer sign in; their runs and comments
            stay.
          </Text>
          <View style={styles.actions}>
            <Button
              label="Yes, deactivate"
              variant="danger"
              compact
              busy={update.isPending}
              onPress={() => update.mutateAsync({ id: user.id, active: false }).finally(() => setConfirming(false))}
            />
            <Button label="Keep active" compact onPress={() => setConfirming(false)} />
          </View>
        </View>
      ) : null}
      {update.error ? <ErrorView error={update.error} title="The change was not saved" /> : null}
      {update.isSuccess && !update.isPending ? <Text style={text.muted} role="status">Saved.</Text> : null}
    </Card>
  );
}

export default function TeamUsers() {
  const users = useAdminUsers();
  const me = useMe().data;
  const wide = useIsWide();
  const [selected, setSelected] = useState<number | null>(null);
  const columns = useMemo(
    () => [
      col.accessor('name', { header: 'Name', meta: { flex: 1 } }),
      col.accessor('email', {
        header: 'E-mail',
        // Wrap only after the @ (a zero-width space there), never mid-word: "researcher@ / keelson.test".
        cell: (c) => (
          <Text style={[text.body, styles.email]} aria-label={c.getValue()}>
            {c.getValue().replace('@', '@\u200B')}
          </Text>
        ),
        meta: { flex: 1.8 },
      }),
      col.accessor((u) => ROLE_LABELS[u.role], { id: 'role', header: 'Role', meta: { width: 112 } }),
      col.accessor('active', { header: 'Status', cell: (c) => <StatusChip active={c.getValue()} />, meta: { width: 132 } }),
      col.accessor('lastLoginAt', {
        header: 'Last sign-in',
        cell: (c) => <Text style={[text.num, { fontSize: 13 }]}>{formatWhen(c.getValue())}</Text>,
        meta: { width: 120 },
      }),
    ],
    [],
  );
  const current = users.data?.find((u) => u.id === selected) ?? null;
  const editor = current && me ? <UserEditor key={current.id} user={current} me={me.id} onClose={() => setSelected(null)} /> : null;

  return (
    <Screen title="Team" subtitle="People who can sign in to Keelson, their roles, invitations, mail and the audit log.">
      <TeamTabs />
      {users.isError ? <ErrorView error={users.error} onRetry={() => void users.refetch()} /> : null}
      {users.isPending ? <Text style={text.muted}>Loading users…</Text> : null}
      {users.data ? (
        <View style={[styles.split, wide && styles.splitWide]}>
          <View style={{ flex: 2, minWidth: 0 }}>
            <DataTable
              label="Users"
              data={users.data}
              columns={columns}
              getRowId={(u) => String(u.id)}
              filterable
              initialSort={[{ id: 'name', desc: false }]}
              onRowPress={(u) => setSelected(u.id)}
              selectedRowId={selected === null ? undefined : String(selected)}
              renderCard={(u) =>
                selected === u.id && editor ? (
                  editor
                ) : (
                  <Card title={u.name} subtitle={u.email} aside={<StatusChip active={u.active} />}>
                    <Text style={text.body}>
                      {ROLE_LABELS[u.role]} · last sign-in {formatWhen(u.lastLoginAt)}
                    </Text>
                    <Button label="Change" compact onPress={() => setSelected(u.id)} accessibilityLabel={`Change ${u.name}`} />
                  </Card>
                )
              }
            />
          </View>
          {wide ? (
            <View style={{ width: 300 }}>
              {editor ?? <Card title="Choose a user"><Text style={text.muted}>Press a row to change the role or deactivate the account.</Text></Card>}
            </View>
          ) : null}
        </View>
      ) : null}
    </Screen>
  );
}

const styles = StyleSheet.create({
  split: { gap: space.lg },
  splitWide: { flexDirection: 'row', alignItems: 'flex-start' },
  actions: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm },
  email: { wordBreak: 'normal', overflowWrap: 'normal' } as object,
  confirm: { gap: space.sm, padding: space.md, borderWidth: 1, borderColor: '#B5533C', borderRadius: 6, backgroundColor: '#FBF1EE' },
});
