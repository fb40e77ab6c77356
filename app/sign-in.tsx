import { Text } from 'react-native';
import { Redirect, useLocalSearchParams, useRouter } from 'expo-router';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { loginBodySchema, type LoginBody } from '../shared/auth';
import { useLogin, useMe } from '../hooks/use-session';
import { useServerErrors } from '../hooks/use-form-errors';
import { AuthFrame } from '../components/auth-frame';
import { Button } from '../components/button';
import { Card } from '../components/card';
import { ErrorView } from '../components/error-view';
import { FormTextField } from '../components/text-field';
import { text } from '../components/theme';
import { safeNext } from '../components/nav-items';

const FIELDS = ['email', 'password'] as const;

/**
 * Sign-in. The form is on screen from the first frame: it does not wait for the session check
 * (`/auth/me`), which only sends an already signed-in visitor on to where they were going.
 */
export default function SignIn() {
  const { next } = useLocalSearchParams<{ next?: string }>();
  const router = useRouter();
  const me = useMe();
  const login = useLogin();
  const { control, handleSubmit, setError } = useForm<LoginBody>({
    resolver: zodResolver(loginBodySchema),
    defaultValues: { email: '', password: '' },
  });
  const server = useServerErrors(setError, FIELDS);

  if (me.data && !login.isPending && !login.isSuccess) return <Redirect href={safeNext(next) as '/'} />;

  const submit = handleSubmit((body) => {
    if (login.isPending) return;
    server.clear();
    return login.mutateAsync(body).then(
      () => router.replace(safeNext(next) as '/'),
      (err: unknown) => server.onServerError(err),
    );
  });

  return (
    <AuthFrame>
      <Card>
        <Text style={text.title} role="heading" aria-level={1}>
          Sign in
        </Text>
        <FormTextField
          control={control}
          name="email"
          label="E-mail"
          autoComplete="email"
          keyboardType="email-address"
          autoCapitalize="none"
          inputMode="email"
          onSubmitEditing={() => void submit()}
        />
        <FormTextField
          control={control}
          name="password"
          label="Password"
          secureTextEntry
          autoComplete="current-password"
          onSubmitEditing={() => void submit()}
        />
        {server.general ? <ErrorView error={server.general} title="Sign-in failed" /> : null}
        <Button label="Sign in" variant="primary" onPress={submit} busy={login.isPending} style={{ alignSelf: 'stretch' }} />
        <Text style={text.muted}>New to Keelson? An admin sends you an invitation e-mail with a link to set your password.</Text>
      </Card>
    </AuthFrame>
  );
}
