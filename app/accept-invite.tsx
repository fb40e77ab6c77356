import { StyleSheet, Text, View } from 'react-native';
import { useLocalSearchParams, useRouter } from 'expo-router';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { acceptInviteBodySchema, PASSWORD_MIN } from '../shared/auth';
import { ROLE_LABELS } from '../shared/roles';
import { useAcceptInvitation, useInvitationPreview } from '../hooks/use-session';
import { useServerErrors } from '../hooks/use-form-errors';
import { AuthFrame } from '../components/auth-frame';
import { Button } from '../components/button';
import { Card } from '../components/card';
import { ErrorView } from '../components/error-view';
import { FormTextField } from '../components/text-field';
import { space, text } from '../components/theme';

/** The server's password rule (shared/auth.ts) plus the repeat, checked before anything is sent. */
const acceptFormSchema = z
  .object({ password: acceptInviteBodySchema.shape.password, confirm: z.string() })
  .refine((v) => v.confirm === v.password, { path: ['confirm'], message: 'The two passwords differ' });
type AcceptForm = z.infer<typeof acceptFormSchema>;
const FIELDS = ['password'] as const;

export default function AcceptInvite() {
  const { token } = useLocalSearchParams<{ token?: string }>();
  const router = useRouter();
  const preview = useInvitationPreview(token);
  const accept = useAcceptInvitation();
  const { control, handleSubmit, setError } = useForm<AcceptForm>({
    resolver: zodResolver(acceptFormSchema),
    defaultValues: { password: '', confirm: '' },
  });
  const server = useServerErrors(setError, FIELDS);

  const submit = handleSubmit(({ password }) => {
    if (!token || accept.isPending) return;
    server.clear();
    return accept.mutateAsync({ token, password }).then(
      () => router.replace('/'),
      (err: unknown) => server.onServerError(err),
    );
  });

  return (
    <AuthFrame maxWidth={460}>
      <Card>
        <Text style={text.title} role="heading" aria-level={1}>
          Accept your invitation
        </Text>
        {!token ? (
          <ErrorView error={new Error('This link has no invitation token. Open the link from your invitation e-mail.')} title="Link incomplete" />
        ) : preview.isPending ? (
          <Text style={text.muted} role="status">
            Checking the invitation…
          </Text>
        ) : preview.isError ? (
          <>
            <ErrorView error={preview.error} title="This invitation cannot be used" />
            <Text style={text.muted}>Ask your admin for a new invitation.</Text>
            <Button label="Go to sign-in" href="/sign-in" />
          </>
        ) : (
          <>
            <View style={styles.facts}>
              <Fact label="Name" value={preview.data.name} />
              <Fact label="E-mail" value={preview.data.email} />
              <Fact label="Role" value={ROLE_LABELS[preview.data.role]} />
              <Fact label="Link valid until" value={preview.data.expiresAt.slice(0, 16).replace('T', ' ') + ' UTC'} />
            </View>
            <FormTextField
              control={control}
              name="password"
              label="New password"
              secureTextEntry
              autoComplete="new-password"
              hint={`At least ${PASSWORD_MIN} characters.`}
            />
            <FormTextField
              control={control}
              name="confirm"
              label="Repeat the password"
              secureTextEntry
              autoComplete="new-password"
              onSubmitEditing={() => void submit()}
            />
            {server.general ? <ErrorView error={server.general} title="The password was not set" /> : null}
            <Button label="Set password and sign in" variant="primary" onPress={submit} busy={accept.isPending} style={{ alignSelf: 'stretch' }} />
          </>
        )}
      </Card>
    </AuthFrame>
  );
}

function Fact({ label, value }: { label: string; value: string }) {
  return (
    <View style={styles.fact}>
      <Text style={[text.label, { width: 120 }]}>{label}</Text>
      <Text style={[text.body, { flex: 1 }]}>{value}</Text>
    </View>
  );
}

const styles = StyleSheet.create({
  facts: { gap: space.xs },
  fact: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
});
