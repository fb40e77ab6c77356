import { useState } from 'react';
import { StyleSheet, Text, View } from 'react-native';
import { Slot, type ErrorBoundaryProps } from 'expo-router';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { KeelsonApiError } from '../shared/errors';
import { useKeelsonFonts } from '../components/fonts';
import { Button } from '../components/button';
import { colors, fonts, space } from '../components/theme';

function makeQueryClient() {
  return new QueryClient({
    defaultOptions: {
      queries: {
        // Client errors (4xx) will not change on retry; server/network ones get one more try.
        retry: (count, err) => count < 1 && !(err instanceof KeelsonApiError && err.status >= 400 && err.status < 500),
        refetchOnWindowFocus: false,
      },
    },
  });
}

export default function RootLayout() {
  const [client] = useState(makeQueryClient);
  // The shipped fonts load in the background. Nothing waits for them: the first frame is the real
  // screen (the sign-in form, or the signed-in frame's placeholder), drawn in the fallback face until
  // the shipped faces swap in — never a blank or hidden page.
  useKeelsonFonts();
  return (
    <QueryClientProvider client={client}>
      <View style={styles.fill}>
        <Slot />
      </View>
    </QueryClientProvider>
  );
}

/** Last-resort screen for a render error anywhere below the root. */
export function ErrorBoundary({ error, retry }: ErrorBoundaryProps) {
  return (
    <View style={[styles.center, { padding: space.xl, gap: space.md }]} role="alert">
      <Text style={styles.title}>Keelson hit an error on this screen</Text>
      <Text style={styles.body}>{error.message}</Text>
      <Text style={styles.body}>Nothing was changed by this error. Try again, or go back to Home.</Text>
      <View style={{ flexDirection: 'row', gap: space.sm }}>
        <Button label="Try again" variant="primary" onPress={() => void retry()} />
        <Button label="Go to Home" href="/" />
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  fill: { flex: 1, backgroundColor: colors.paper },
  center: { flex: 1, alignItems: 'center', justifyContent: 'center', backgroundColor: colors.paper },
  title: { fontFamily: fonts.textStrong, fontSize: 20, color: colors.ink, textAlign: 'center' },
  body: { fontFamily: fonts.text, fontSize: 15, color: colors.slate, textAlign: 'center', maxWidth: 520 },
});
