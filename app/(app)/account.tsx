import { Text, View } from 'react-native';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { changePasswordBodySchema, PASSWORD_MIN } from '../../shared/auth';
import { KeelsonApiError } from '../../shared/errors';
import { ROLE_LABELS } from '../../shared/roles';
import { useChangePassword, useMe, useMyOutbox } from '../../hooks/use-session';
import { useServerErrors } from '../../hooks/use-form-errors';
import { useIsWide } from '../../hooks/use-layout';
import { useSignOut } from '../../components/account-menu';
import { Button } from '../../components/button';
import { Card } from '../../components/card';
import { ErrorView } from '../../components/error-view';
import { MailList } from '../../components/mail-list';
import { Screen } from '../../components/screen';
import { FormTextField } from '../../components/text-field';
import { colors, space, text } from '../../components/theme';

/** Checked before sending; the server's policy (`issues` on a 400) has the last word, shown on the same fields. */
const passwordFormSchema = z
  .object({
    currentPassword: changePasswordBodySchema.shape.currentPassword,
    newPassword: changePasswordBodySchema.shape.newPassword,
    repeatPassword: z.string(),
  })
  .refine((v) => v.repeatPassword === v.newPassword, { path: ['repeatPassword'], message: 'The two new passwords differ' });
type PasswordForm = z.infer<typeof passwordFormSchema>;
const PASSWORD_FIELDS = ['currentPassword', 'newPassword'] as const;
const EMPTY: PasswordForm = { currentPassword: '', newPassword: '', repeatPassword: '' };

function PasswordChange() {
  const change = useChangePassword();
  const { control, handleSubmit, setError, reset } = useForm<PasswordForm>({ resolver: zodResolver(passwordFormSchema), defaultValues: EMPTY });
  const server = useServerErrors(setError, PASSWORD_FIELDS);
  const submit = handleSubmit(({ currentPassword, newPassword }) => {
    server.clear();
    return change.mutateAsync({ currentPassword, newPassword }).then(
      () => reset(EMPTY),
      (err: unknown) => {
        // 403 = the current password is wrong (the contract): say so on that field.
        if (err instanceof KeelsonApiError && err.status === 403 && err.code === 'forbidden') {
          setError('currentPassword', { type: 'server', message: err.message }, { shouldFocus: true });
          return;
        }
        server.onServerError(err);
      },
    );
  });
  return (
    <Card title="Change password" subtitle="You stay signed in here. Use the new password the next time you sign in.">
      <FormTextField control={control} name="currentPassword" label="Current password" secureTextEntry autoComplete="current-password" />
      <FormTextField
        control={control}
        name="newPassword"
        label="New password"
        secureTextEntry
        autoComplete="new-password"
        hint={`At least ${PASSWORD_MIN} characters.`}
      />
      <FormTextField
        control={control}
        name="repeatPassword"
        label="Repeat the new password"
        secureTextEntry
        autoComplete="new-password"
        onSubmitEditing={() => void (change.isPending ? undefined : submit())}
      />
      {server.general ? <ErrorView error={server.general} title="The password was not changed" /> : null}
      {change.isSuccess && !change.isPending ? (
        <Text style={[text.body, { color: colors.kelp }]} role="status">
          Password changed.
        </Text>
      ) : null}
      <Button label="Change password" variant="primary" onPress={submit} busy={change.isPending} />
    </Card>
  );
}

export default function Account() {
  const me = useMe().data;
  const mail = useMyOutbox();
  const wide = useIsWide();
  const { signOut, pending } = useSignOut();
  if (!me) return null;
  return (
    <Screen title="Account" subtitle="Who you are signed in as, your password, and mail Keelson sent you.">
      <View style={[{ gap: space.lg }, wide && { flexDirection: 'row', alignItems: 'flex-start' }]}>
        <Card title={me.name} subtitle={me.email} style={wide ? { flex: 1 } : undefined}>
          <Text style={text.body}>Role: {ROLE_LABELS[me.role]}. Only an admin can change roles.</Text>
          <View style={{ flexDirection: 'row', gap: space.sm }}>
            <Button label="Sign out" onPress={signOut} busy={pending} />
          </View>
        </Card>
        <View style={wide ? { flex: 1 } : undefined}>
          <PasswordChange />
        </View>
      </View>
      <Text style={text.heading} role="heading" aria-level={2}>
        Mail sent to you
      </Text>
      {mail.isError ? <ErrorView error={mail.error} /> : null}
      {mail.data ? <MailList messages={mail.data} emptyBody="Keelson has not sent you any e-mail." /> : null}
    </Screen>
  );
}
