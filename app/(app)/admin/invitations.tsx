import { useMemo } from 'react';
import { StyleSheet, Text, View } from 'react-native';
import { createColumnHelper } from '@tanstack/react-table';
import { Controller, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { inviteBodySchema, type Invitation, type InviteBody } from '../../../shared/auth';
import { ROLE_LABELS, ROLES, type Role } from '../../../shared/roles';
import { useCreateInvitation, useInvitations } from '../../../hooks/use-admin';
import { useIsWide } from '../../../hooks/use-layout';
import { Button } from '../../../components/button';
import { Card } from '../../../components/card';
import { Chip } from '../../../components/chip';
import { DataTable } from '../../../components/data-table';
import { ErrorView } from '../../../components/error-view';
import { formatWhen, invitationState, type InvitationState } from '../../../components/format';
import { Screen } from '../../../components/screen';
import { Select } from '../../../components/select';
import { TeamTabs } from '../../../components/team-tabs';
import { FormTextField } from '../../../components/text-field';
import { useServerErrors } from '../../../hooks/use-form-errors';
import { space, text } from '../../../components/theme';

const ROLE_OPTIONS = ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }));
const col = createColumnHelper<Invitation>();

function InvitationStateChip({ state }: { state: InvitationState }) {
  if (state === 'accepted') return <Chip label="accepted" shape="filled" tone="kelp" />;
  if (state === 'expired') return <Chip label="expired" shape="dashed" tone="fog" />;
  return <Chip label="pending" shape="outlined" tone="brass" />;
}

const INVITE_FIELDS = ['email', 'name', 'role'] as const;

function InviteForm() {
  const create = useCreateInvitation();
  const { control, handleSubmit, setError, reset } = useForm<z.input<typeof inviteBodySchema>, unknown, InviteBody>({
    resolver: zodResolver(inviteBodySchema),
    defaultValues: { email: '', name: '', role: 'researcher' },
  });
  const server = useServerErrors(setError, INVITE_FIELDS);
  const submit = handleSubmit((body) => {
    server.clear();
    return create.mutateAsync(body).then(
      () => reset({ email: '', name: '', role: body.role }),
      (err: unknown) => server.onServerError(err),
    );
  });
  return (
    <Card title="Invite someone" subtitle="Keelson e-mails a link that lets them set a password; the link works once.">
      <FormTextField control={control} name="email" label="Invitee e-mail" autoCapitalize="none" inputMode="email" />
      <FormTextField control={control} name="name" label="Invitee name" />
      <Controller
        control={control}
        name="role"
        render={({ field, fieldState }) => (
          <Select label="Invitee role" value={field.value as Role} options={ROLE_OPTIONS} onChange={field.onChange} error={fieldState.error?.message} />
        )}
      />
      {server.general ? <ErrorView error={server.general} title="The invitation was not sent" /> : null}
      {create.data && !create.isPending && !server.general ? (
        <Text style={[text.body, styles.ok]} role="status">
          Invitation sent to {create.data.email} as {ROLE_LABELS[create.data.role].toLowerCase()}. The e-mail is in the Outbox.
        </Text>
      ) : null}
      <Button label="Send invitation" variant="primary" onPress={submit} busy={create.isPending} />
    </Card>
  );
}

export default function TeamInvitations() {
  const list = useInvitations();
  const wide = useIsWide();
  const columns = useMemo(
    () => [
      col.accessor('name', { header: 'Name' }),
      col.accessor('email', { header: 'E-mail', meta: { flex: 1.5 } }),
      col.accessor((i) => ROLE_LABELS[i.role], { id: 'role', header: 'Role', meta: { width: 112 } }),
      col.accessor((i) => invitationState(i), { id: 'state', header: 'State', cell: (c) => <InvitationStateChip state={c.getValue()} />, meta: { width: 128 } }),
      col.accessor('createdAt', { header: 'Sent', cell: (c) => <Text style={[text.num, { fontSize: 13 }]}>{formatWhen(c.getValue())}</Text>, meta: { width: 120 } }),
    ],
    [],
  );
  return (
    <Screen title="Team" subtitle="Invitations: who was asked to join, in which role, and whether they did.">
      <TeamTabs />
      <View style={[{ gap: space.lg }, wide && { flexDirection: 'row', alignItems: 'flex-start' }]}>
        <View style={wide ? { width: 380 } : undefined}>
          <InviteForm />
        </View>
        <View style={{ flex: 1, minWidth: 0, gap: space.sm }}>
          <Text style={text.heading} role="heading" aria-level={2}>
            Invitations
          </Text>
          {list.isError ? <ErrorView error={list.error} onRetry={() => void list.refetch()} /> : null}
          {list.data ? (
            <DataTable
              label="Invitations"
              data={list.data}
              columns={columns}
              getRowId={(i) => String(i.id)}
              initialSort={[{ id: 'createdAt', desc: true }]}
              emptyTitle="No invitations yet"
              emptyBody="Invite someone with the form; the invitation shows here as pending until they set a password."
              renderCard={(i) => (
                <Card title={i.name} subtitle={i.email} aside={<InvitationStateChip state={invitationState(i)} />}>
                  <Text style={text.muted}>
                    {ROLE_LABELS[i.role]} · sent {formatWhen(i.createdAt)} · {i.acceptedAt ? `accepted ${formatWhen(i.acceptedAt)}` : `valid until ${formatWhen(i.expiresAt)}`}
                  </Text>
                </Card>
              )}
            />
          ) : null}
        </View>
      </View>
    </Screen>
  );
}

const styles = StyleSheet.create({ ok: { color: '#2F7D5B' } });
