import { ScrollView, StyleSheet, Text, View } from 'react-native';
import { usePathname } from 'expo-router';
import { Button } from '../components/button';
import { colors, fonts, space, text } from '../components/theme';

export default function NotFound() {
  const pathname = usePathname();
  return (
    <ScrollView style={{ backgroundColor: colors.paper }} contentContainerStyle={styles.page}>
      <View style={styles.column}>
        <Text style={styles.code}>404</Text>
        <Text style={text.title} role="heading" aria-level={1}>
          Page not found
        </Text>
        <Text style={[text.body, { color: colors.slate }]}>
          Keelson has no page at <Text style={{ fontFamily: fonts.mono }}>{pathname}</Text>. The link may be old or mistyped.
        </Text>
        <Button label="Go to Home" variant="primary" href="/" />
      </View>
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  page: { flexGrow: 1, justifyContent: 'center', padding: space.lg },
  column: { width: '100%', maxWidth: 480, alignSelf: 'center', gap: space.md },
  code: { fontFamily: fonts.mono, fontSize: 48, color: colors.brass },
});
