import { View } from 'react-native';
import { Platform } from 'react-native';
import { Redirect, Slot, usePathname } from 'expo-router';
import { readSessionHint, useMe } from '../../hooks/use-session';
import { AppShell, ShellPlaceholder } from '../../components/app-shell';
import { ErrorView } from '../../components/error-view';
import { colors, space } from '../../components/theme';

/**
 * Everything in (app) needs a signed-in user; others go to /sign-in and come back afterwards.
 * While `/auth/me` is on its way the first frame is never blank: a browser that was signed out last
 * time (or has never signed in) goes to the sign-in form at once — the form itself forwards a visitor
 * who turns out to be signed in — and one that was signed in sees the signed-in frame's placeholder.
 */
export default function SignedInLayout() {
  const me = useMe();
  const pathname = usePathname();
  // On web keep the query string too (e.g. a filtered list) so sign-in returns exactly here.
  const next = Platform.OS === 'web' && typeof window !== 'undefined' ? window.location.pathname + window.location.search : pathname;
  const toSignIn = <Redirect href={next === '/' ? '/sign-in' : { pathname: '/sign-in', params: { next } }} />;
  if (me.isPending) return readSessionHint() === false ? toSignIn : <ShellPlaceholder />;
  if (me.isError) {
    return (
      <View style={{ flex: 1, padding: space.xl, backgroundColor: colors.paper }}>
        <ErrorView error={me.error} title="Keelson could not check your session" onRetry={() => void me.refetch()} />
      </View>
    );
  }
  if (!me.data) return toSignIn;
  return (
    <AppShell user={me.data}>
      <Slot />
    </AppShell>
  );
}
