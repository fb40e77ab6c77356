import type { ReactNode } from 'react';
import { ActivityIndicator, Pressable, StyleSheet, Text, View } from 'react-native';
import { Link, usePathname } from 'expo-router';
import type { User } from '../shared/auth';
import { useIsWide } from '../hooks/use-layout';
import { AccountMenu } from './account-menu';
import { barItemsFor, isActive, navItemsFor, type NavItem } from './nav-items';
import { colors, fonts, space } from './theme';

function Brand({ small }: { small?: boolean }) {
  return (
    <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm }}>
      <View style={styles.logo} aria-hidden>
        <View style={styles.logoMast} />
        <View style={styles.logoBeam} />
      </View>
      <Text style={[styles.brand, small && { fontSize: 18 }]}>Keelson</Text>
    </View>
  );
}

function RailLink({ item, active }: { item: NavItem; active: boolean }) {
  return (
    <Link href={item.href} asChild>
      <Pressable role="link" aria-label={item.label} aria-current={active ? 'page' : undefined} style={StyleSheet.flatten([styles.railItem, active && styles.railItemOn])}>
        <Text style={[styles.glyph, active && { color: colors.brass }]} aria-hidden>
          {item.glyph}
        </Text>
        <Text style={[styles.railText, active && { fontFamily: fonts.textStrong }]}>{item.label}</Text>
      </Pressable>
    </Link>
  );
}

function BarLink({ item, active }: { item: NavItem; active: boolean }) {
  return (
    <Link href={item.href} asChild>
      <Pressable role="link" aria-label={item.label} aria-current={active ? 'page' : undefined} style={StyleSheet.flatten(styles.barItem)}>
        <View style={[styles.barMark, active && { backgroundColor: colors.brass }]} />
        <Text style={[styles.barGlyph, active && { color: colors.ink }]} aria-hidden>
          {item.glyph}
        </Text>
        <Text style={[styles.barText, active && { fontFamily: fonts.textStrong, color: colors.ink }]} numberOfLines={1}>
          {item.label}
        </Text>
      </Pressable>
    </Link>
  );
}

/** Signed-in frame: left rail at ≥ 900 px, app bar + bottom bar (≤ 4 destinations) on phones. */
export function AppShell({ user, children }: { user: User; children: ReactNode }) {
  const wide = useIsWide();
  const pathname = usePathname();
  if (wide) {
    return (
      <View style={styles.wideRoot}>
        <View style={styles.rail} role="navigation" aria-label="Main">
          <View style={{ paddingHorizontal: space.sm, paddingVertical: space.md }}>
            <Brand />
          </View>
          <View style={{ gap: 2, flex: 1 }}>
            {navItemsFor(user.role).map((i) => (
              <RailLink key={i.href} item={i} active={isActive(i.href, pathname)} />
            ))}
          </View>
          <AccountMenu user={user} placement="rail" />
        </View>
        <View style={styles.main} role="main">
          {children}
        </View>
      </View>
    );
  }
  return (
    <View style={styles.phoneRoot}>
      <View style={styles.appBar}>
        <Brand small />
        <AccountMenu user={user} placement="bar" />
      </View>
      <View style={styles.main} role="main">
        {children}
      </View>
      <View style={styles.bottomBar} role="navigation" aria-label="Main">
        {barItemsFor(user.role).map((i) => (
          <BarLink key={i.href} item={i} active={isActive(i.href, pathname)} />
        ))}
      </View>
    </View>
  );
}

/**
 * The signed-in frame while the session check is on its way (this browser was signed in last time):
 * rail or app bar with the name, and a quiet status in the content area — drawn on the first frame,
 * so a reload never shows a blank page. The navigation appears once the server says who is signed in.
 */
export function ShellPlaceholder() {
  const wide = useIsWide();
  const status = (
    <View style={styles.placeholder} role="status" aria-label="Checking your session">
      <ActivityIndicator color={colors.brass} />
      <Text style={styles.placeholderText}>Checking your session…</Text>
    </View>
  );
  if (wide) {
    return (
      <View style={styles.wideRoot}>
        <View style={styles.rail}>
          <View style={{ paddingHorizontal: space.sm, paddingVertical: space.md }}>
            <Brand />
          </View>
        </View>
        <View style={styles.main}>{status}</View>
      </View>
    );
  }
  return (
    <View style={styles.phoneRoot}>
      <View style={styles.appBar}>
        <Brand small />
      </View>
      <View style={styles.main}>{status}</View>
    </View>
  );
}

const styles = StyleSheet.create({
  placeholder: { flex: 1, alignItems: 'center', justifyContent: 'center', gap: space.sm, padding: space.xl },
  placeholderText: { fontFamily: fonts.text, fontSize: 15, color: colors.slate },
  wideRoot: { flex: 1, flexDirection: 'row', backgroundColor: colors.paper, minHeight: '100%' as unknown as number },
  rail: { width: 232, backgroundColor: colors.ink, padding: space.md, gap: space.md, zIndex: 10 },
  main: { flex: 1, minWidth: 0, minHeight: 0 },
  railItem: { flexDirection: 'row', alignItems: 'center', gap: space.md, paddingHorizontal: space.md, paddingVertical: 10, borderRadius: 6 },
  railItemOn: { backgroundColor: '#1C3A52' },
  glyph: { width: 18, textAlign: 'center', color: '#C9D3DC', fontSize: 16 },
  railText: { color: colors.onDark, fontFamily: fonts.text, fontSize: 15 },
  phoneRoot: { flex: 1, backgroundColor: colors.paper },
  appBar: {
    height: 52,
    backgroundColor: colors.ink,
    flexDirection: 'row',
    alignItems: 'center',
    justifyContent: 'space-between',
    paddingHorizontal: space.lg,
    zIndex: 10,
  },
  brand: { color: colors.onDark, fontFamily: fonts.textStrong, fontSize: 20, letterSpacing: 0.5 },
  logo: { width: 22, height: 22, borderRadius: 5, backgroundColor: colors.brass, alignItems: 'center', justifyContent: 'flex-end', paddingBottom: 5 },
  logoMast: { width: 3, height: 10, backgroundColor: colors.paper },
  logoBeam: { width: 14, height: 3, backgroundColor: colors.paper },
  bottomBar: {
    flexDirection: 'row',
    backgroundColor: colors.card,
    borderTopWidth: 1,
    borderTopColor: colors.rule,
    paddingBottom: 4,
  },
  barItem: { flex: 1, alignItems: 'center', paddingTop: 0, paddingBottom: 6, gap: 1, minHeight: 56 },
  barMark: { height: 3, width: 36, backgroundColor: 'transparent', marginBottom: 5, borderRadius: 2 },
  barGlyph: { fontSize: 17, color: colors.slate, lineHeight: 20 },
  barText: { fontFamily: fonts.text, fontSize: 12, color: colors.slate },
});
