import { Pressable, ScrollView, StyleSheet, Text } from 'react-native';
import { Link, usePathname, type Href } from 'expo-router';
import { colors, fonts, space } from './theme';

export interface SectionTab {
  href: string;
  label: string;
}

/** Row of links between the pages of one section (e.g. Team: users, invitations, outbox, audit). */
export function SectionTabs({ tabs, label }: { tabs: readonly SectionTab[]; label: string }) {
  const pathname = usePathname();
  return (
    <ScrollView horizontal showsHorizontalScrollIndicator={false} role="navigation" aria-label={label} contentContainerStyle={styles.row}>
      {tabs.map((t) => {
        const on = pathname === t.href;
        return (
          <Link key={t.href} href={t.href as Href} asChild>
            <Pressable role="link" aria-label={t.label} aria-current={on ? 'page' : undefined} style={StyleSheet.flatten([styles.tab, on && styles.on])}>
              <Text style={[styles.text, on && styles.textOn]}>{t.label}</Text>
            </Pressable>
          </Link>
        );
      })}
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  row: { gap: space.xs, borderBottomWidth: 1, borderBottomColor: colors.rule, flexGrow: 1 },
  tab: { paddingHorizontal: space.md, paddingVertical: space.sm, borderBottomWidth: 3, borderBottomColor: 'transparent' },
  on: { borderBottomColor: colors.brass },
  text: { fontFamily: fonts.text, fontSize: 15, color: colors.slate },
  textOn: { fontFamily: fonts.textStrong, color: colors.ink },
});
