import type { ReactNode } from 'react';
import { StyleSheet, Text, View, type StyleProp, type ViewStyle } from 'react-native';
import { colors, radius, space, text } from './theme';

export interface CardProps {
  title?: string;
  /** Small line under the title. */
  subtitle?: string;
  /** Right side of the title row (e.g. a chip or a button). */
  aside?: ReactNode;
  children?: ReactNode;
  style?: StyleProp<ViewStyle>;
  accessibilityLabel?: string;
}

/** White panel with a rule border; the building block of every screen. */
export function Card({ title, subtitle, aside, children, style, accessibilityLabel }: CardProps) {
  return (
    <View style={[styles.card, style]} aria-label={accessibilityLabel} role={accessibilityLabel ? 'region' : undefined}>
      {title || aside ? (
        <View style={styles.head}>
          <View style={{ flex: 1, minWidth: 0 }}>
            {title ? <Text style={text.heading} role="heading" aria-level={2}>{title}</Text> : null}
            {subtitle ? <Text style={text.muted}>{subtitle}</Text> : null}
          </View>
          {aside}
        </View>
      ) : null}
      {children}
    </View>
  );
}

const styles = StyleSheet.create({
  card: {
    backgroundColor: colors.card,
    borderColor: colors.rule,
    borderWidth: 1,
    borderRadius: radius.md,
    padding: space.lg,
    gap: space.md,
  },
  head: { flexDirection: 'row', alignItems: 'flex-start', gap: space.md },
});
