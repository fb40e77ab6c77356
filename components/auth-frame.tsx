import type { ReactNode } from 'react';
import { ScrollView, StyleSheet, Text, View } from 'react-native';
import { colors, fonts, space, text } from './theme';

/**
 * The signed-out frame (sign-in, accepting an invitation): paper page, the name and the line under
 * it, one centred column. It draws on the first frame — nothing in it waits for fonts or the session.
 */
export function AuthFrame({ children, maxWidth = 420 }: { children: ReactNode; maxWidth?: number }) {
  return (
    <ScrollView style={{ backgroundColor: colors.paper }} contentContainerStyle={styles.page}>
      <View style={[styles.column, { maxWidth }]}>
        <View style={styles.brandRow}>
          <Text style={styles.brand}>Keelson</Text>
          <Text style={[text.body, { color: colors.slate }]}>Which factors does your SDF need?</Text>
        </View>
        {children}
      </View>
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  page: { flexGrow: 1, justifyContent: 'center', padding: space.lg },
  column: { width: '100%', alignSelf: 'center', gap: space.lg },
  brandRow: { gap: 2 },
  brand: { fontFamily: fonts.textStrong, fontSize: 28, color: colors.ink, letterSpacing: 0.5 },
});
