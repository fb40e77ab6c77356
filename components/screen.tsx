import type { ReactNode } from 'react';
import { ScrollView, StyleSheet, Text, View } from 'react-native';
import { useIsWide } from '../hooks/use-layout';
import { CONTENT_MAX, colors, space, text } from './theme';

export interface ScreenProps {
  title: string;
  /** One line under the title: what this screen is for. */
  subtitle?: string;
  /** Buttons at the right of the title (wrap under it on phones). */
  actions?: ReactNode;
  children?: ReactNode;
  /** Let content use the full width (wide tables); default keeps a readable max width. */
  fullWidth?: boolean;
}

/** Page frame: scrolling column with the page title (h1), optional actions and a max content width. */
export function Screen({ title, subtitle, actions, children, fullWidth }: ScreenProps) {
  const wide = useIsWide();
  return (
    <ScrollView style={styles.scroll} contentContainerStyle={[styles.content, wide && styles.contentWide]}>
      <View style={[styles.inner, !fullWidth && { maxWidth: CONTENT_MAX }]}>
        <View style={[styles.head, wide && styles.headWide]}>
          <View style={{ flexShrink: 1, minWidth: 0, gap: 2 }}>
            <Text style={text.title} role="heading" aria-level={1}>
              {title}
            </Text>
            {subtitle ? <Text style={[text.body, { color: colors.slate }]}>{subtitle}</Text> : null}
          </View>
          {actions ? <View style={styles.actions}>{actions}</View> : null}
        </View>
        {children}
      </View>
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  scroll: { flex: 1, backgroundColor: colors.paper },
  content: { padding: space.lg, paddingBottom: space.xxl },
  contentWide: { padding: space.xl },
  inner: { width: '100%', alignSelf: 'center', gap: space.lg },
  head: { gap: space.md },
  headWide: { flexDirection: 'row', alignItems: 'flex-start', justifyContent: 'space-between' },
  actions: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm },
});
