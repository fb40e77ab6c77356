import { Link, type Href } from 'expo-router';
import { ActivityIndicator, Pressable, StyleSheet, Text, type StyleProp, type ViewStyle } from 'react-native';
import { colors, fonts, radius, space } from './theme';

export type ButtonVariant = 'primary' | 'secondary' | 'danger' | 'quiet';

export interface ButtonProps {
  label: string;
  onPress?: () => void;
  /** Navigates instead of calling onPress (renders a link on web). */
  href?: Href;
  variant?: ButtonVariant;
  disabled?: boolean;
  /** Shows a spinner and disables the button. */
  busy?: boolean;
  /** Accessible name when it should differ from the visible label. */
  accessibilityLabel?: string;
  style?: StyleProp<ViewStyle>;
  compact?: boolean;
}

/** Keelson's button: primary = brass, secondary = outlined ink, danger = outlined rust, quiet = text only. */
export function Button({ label, onPress, href, variant = 'secondary', disabled, busy, accessibilityLabel, style, compact }: ButtonProps) {
  const off = disabled || busy;
  const v = VARIANTS[variant];
  const body = (
    <Pressable
      onPress={href ? undefined : onPress}
      disabled={off}
      role={href ? 'link' : 'button'}
      aria-label={accessibilityLabel ?? label}
      aria-disabled={off || undefined}
      aria-busy={busy || undefined}
      style={
        href
          ? // Link asChild passes a plain style only (no state function).
            StyleSheet.flatten([styles.base, compact && styles.compact, { backgroundColor: v.bg, borderColor: v.border }, style])
          : ({ pressed, hovered, focused }: { pressed: boolean; hovered?: boolean; focused?: boolean }) => [
              styles.base,
              compact && styles.compact,
              { backgroundColor: v.bg, borderColor: v.border },
              (pressed || hovered) && !off && { backgroundColor: v.bgActive },
              focused && styles.focus,
              off && styles.off,
              style,
            ]
      }
    >
      {busy ? <ActivityIndicator size="small" color={v.fg} /> : null}
      <Text style={[styles.label, { color: v.fg }]} numberOfLines={1}>
        {label}
      </Text>
    </Pressable>
  );
  if (href && !off) {
    return (
      <Link href={href} asChild>
        {body}
      </Link>
    );
  }
  return body;
}

const VARIANTS: Record<ButtonVariant, { bg: string; bgActive: string; fg: string; border: string }> = {
  primary: { bg: colors.brass, bgActive: '#8F6222', fg: colors.onDark, border: colors.brass },
  secondary: { bg: colors.card, bgActive: colors.paper, fg: colors.ink, border: colors.ink },
  danger: { bg: colors.card, bgActive: '#F7E9E5', fg: colors.rust, border: colors.rust },
  quiet: { bg: 'transparent', bgActive: colors.brassTint, fg: colors.ink, border: 'transparent' },
};

const styles = StyleSheet.create({
  base: {
    minHeight: 44,
    paddingHorizontal: space.lg,
    borderRadius: radius.sm,
    borderWidth: 1,
    flexDirection: 'row',
    alignItems: 'center',
    justifyContent: 'center',
    gap: space.sm,
    alignSelf: 'flex-start',
  },
  compact: { minHeight: 36, paddingHorizontal: space.md },
  label: { fontFamily: fonts.textStrong, fontSize: 15 },
  focus: { outlineColor: colors.brass, outlineWidth: 2, outlineStyle: 'solid', outlineOffset: 2 } as ViewStyle,
  off: { opacity: 0.5 },
});
