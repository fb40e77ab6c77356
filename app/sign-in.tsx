import { useState } from 'react';
import { ScrollView, StyleSheet, Text, View } from 'react-native';
import { Redirect, useLocalSearchParams, useRouter } from 'expo-router';
import { loginBodySchema } from '../shared/auth';
import { useLogin, useMe } from '../hooks/use-session';
import { Button } from '../components/button';
import { Card } from '../components/card';
import { ErrorView } from '../components/error-view';
import { TextField } from '../components/text-field';
import { colors, fonts, space, text } from '../components/theme';
import { safeNext } from '../components/nav-items';

export default function SignIn() {
  const { next } = useLocalSearchParams<{ next?: string }>();
  const router = useRouter();
  const me = useMe();
  const login = useLogin();
  const [email, setEmail] = useState('');
  const [password, setPassword] = useState('');
  const [fieldErrors, setFieldErrors] = useState<{ email?: string; password?: string }>({});

  if (me.data && !login.isPending && !login.isSuccess) return <Redirect href={safeNext(next) as '/'} />;

  const submit = () => {
    const parsed = loginBodySchema.safeParse({ email, password });
    if (!parsed.success) {
      const errs: { email?: string; password?: string } = {};
      for (const i of parsed.error.issues) errs[i.path[0] as 'email' | 'password'] ??= i.message;
      setFieldErrors(errs);
      return;
    }
    setFieldErrors({});
    login.mutate(parsed.data, { onSuccess: () => router.replace(safeNext(next) as '/') });
  };

  return (
    <ScrollView style={{ backgroundColor: colors.paper }} contentContainerStyle={styles.page}>
      <View style={styles.column}>
        <View style={styles.brandRow}>
          <Text style={styles.brand}>Keelson</Text>
          <Text style={[text.body, { color: colors.slate }]}>Which factors does your SDF need?</Text>
        </View>
        <Card>
          <Text style={text.title} role="heading" aria-level={1}>
            Sign in
          </Text>
          <TextField
            label="E-mail"
            value={email}
            onChangeText={setEmail}
            autoComplete="email"
            keyboardType="email-address"
            autoCapitalize="none"
            inputMode="email"
            error={fieldErrors.email}
            onSubmitEditing={submit}
          />
          <TextField
            label="Password"
            value={password}
            onChangeText={setPassword}
            secureTextEntry
            autoComplete="current-password"
            error={fieldErrors.password}
            onSubmitEditing={submit}
          />
          {login.error ? <ErrorView error={login.error} title="Sign-in failed" /> : null}
          <Button label="Sign in" variant="primary" onPress={submit} busy={login.isPending} style={{ alignSelf: 'stretch' }} />
          <Text style={text.muted}>New to Keelson? An admin sends you an invitation e-mail with a link to set your password.</Text>
        </Card>
      </View>
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  page: { flexGrow: 1, justifyContent: 'center', padding: space.lg },
  column: { width: '100%', maxWidth: 420, alignSelf: 'center', gap: space.lg },
  brandRow: { gap: 2 },
  brand: { fontFamily: fonts.textStrong, fontSize: 28, color: colors.ink, letterSpacing: 0.5 },
});
