import { ActivityIndicator, View } from 'react-native';
import { Platform } from 'react-native';
import { Redirect, Slot, usePathname } from 'expo-router';
import { useMe } from '../../hooks/use-session';
import { AppShell } from '../../components/app-shell';
import { ErrorView } from '../../components/error-view';
import { colors, space } from '../../components/theme';

/** Everything in (app) needs a signed-in user; others go to /sign-in and come back afterwards. */
export default function SignedInLayout() {
  const me = useMe();
  const pathname = usePathname();
  if (me.isPending) {
    return (
      <View style={{ flex: 1, alignItems: 'center', justifyContent: 'center', backgroundColor: colors.paper }}>
        <ActivityIndicator color={colors.brass} accessibilityLabel="Loading" />
      </View>
    );
  }
  if (me.isError) {
    return (
      <View style={{ flex: 1, padding: space.xl, backgroundColor: colors.paper }}>
        <ErrorView error={me.error} title="Keelson could not check your session" onRetry={() => void me.refetch()} />
      </View>
    );
  }
  if (!me.data) {
    // On web keep the query string too (e.g. a filtered list) so sign-in returns exactly here.
    const next = Platform.OS === 'web' && typeof window !== 'undefined' ? window.location.pathname + window.location.search : pathname;
    return <Redirect href={next === '/' ? '/sign-in' : { pathname: '/sign-in', params: { next } }} />;
  }
  return (
    <AppShell user={me.data}>
      <Slot />
    </AppShell>
  );
}
