import { useState } from 'react';
import { ScrollView, StyleSheet, Text, View } from 'react-native';
import { useLocalSearchParams, useRouter } from 'expo-router';
import { PASSWORD_MIN } from '../shared/auth';
import { ROLE_LABELS } from '../shared/roles';
import { useAcceptInvitation, useInvitationPreview } from '../hooks/use-session';
import { Button } from '../components/button';
import { Card } from '../components/card';
import { ErrorView } from '../components/error-view';
import { TextField } from '../components/text-field';
import { colors, fonts, space, text } from '../components/theme';

export default function AcceptInvite() {
  const { token } = useLocalSearchParams<{ token?: string }>();
  const router = useRouter();
  const preview = useInvitationPreview(token);
  const accept = useAcceptInvitation();
  const [password, setPassword] = useState('');
  const [confirm, setConfirm] = useState('');
  const [errors, setErrors] = useState<{ password?: string; confirm?: string }>({});

  const submit = () => {
    const e: typeof errors = {};
    if (password.length < PASSWORD_MIN) e.password = `Use at least ${PASSWORD_MIN} characters`;
    if (confirm !== password) e.confirm = 'The two passwords differ';
    setErrors(e);
    if (e.password || e.confirm || !token) return;
    accept.mutate({ token, password }, { onSuccess: () => router.replace('/') });
  };

  return (
    <ScrollView style={{ backgroundColor: colors.paper }} contentContainerStyle={styles.page}>
      <View style={styles.column}>
        <Text style={styles.brand}>Keelson</Text>
        <Card>
          <Text style={text.title} role="heading" aria-level={1}>
            Accept your invitation
          </Text>
          {!token ? (
            <ErrorView error={new Error('This link has no invitation token. Open the link from your invitation e-mail.')} title="Link incomplete" />
          ) : preview.isPending ? (
            <Text style={text.muted}>Checking the invitation…</Text>
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
              <TextField
                label="New password"
                value={password}
                onChangeText={setPassword}
                secureTextEntry
                autoComplete="new-password"
                hint={`At least ${PASSWORD_MIN} characters.`}
                error={errors.password}
              />
              <TextField
                label="Repeat the password"
                value={confirm}
                onChangeText={setConfirm}
                secureTextEntry
                autoComplete="new-password"
                error={errors.confirm}
                onSubmitEditing={submit}
              />
              {accept.error ? <ErrorView error={accept.error} title="The password was not set" /> : null}
              <Button label="Set password and sign in" variant="primary" onPress={submit} busy={accept.isPending} style={{ alignSelf: 'stretch' }} />
            </>
          )}
        </Card>
      </View>
    </ScrollView>
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
  page: { flexGrow: 1, justifyContent: 'center', padding: space.lg },
  column: { width: '100%', maxWidth: 460, alignSelf: 'center', gap: space.lg },
  brand: { fontFamily: fonts.textStrong, fontSize: 28, color: colors.ink },
  facts: { gap: space.xs },
  fact: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
});
