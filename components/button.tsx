import { useCallback, useEffect, useRef, useState } from 'react';
import { Link, type Href } from 'expo-router';
import { ActivityIndicator, Pressable, StyleSheet, Text, type StyleProp, type ViewStyle } from 'react-native';
import { colors, fonts, radius, space } from './theme';

export type ButtonVariant = 'primary' | 'secondary' | 'danger' | 'quiet';

export interface ButtonProps {
  label: string;
  /**
   * Called on press. When it returns a promise (e.g. `mutation.mutateAsync(…)` or react-hook-form's
   * `handleSubmit(…)()`), the button stays pending — spinner, disabled, further presses ignored —
   * until the promise settles. A rejection is left for the caller to show (mutation.error); the
   * button only waits for it.
   */
  onPress?: () => void | Promise<unknown>;
  /** Navigates instead of calling onPress (renders a link on web). */
  href?: Href;
  variant?: ButtonVariant;
  disabled?: boolean;
  /** Shows a spinner and disables the button (e.g. `mutation.isPending`). */
  busy?: boolean;
  /** Accessible name when it should differ from the visible label. */
  accessibilityLabel?: string;
  style?: StyleProp<ViewStyle>;
  compact?: boolean;
}

/** Keelson's button: primary = brass, secondary = outlined ink, danger = outlined rust, quiet = text only. */
export function Button({ label, onPress, href, variant = 'secondary', disabled, busy: busyProp, accessibilityLabel, style, compact }: ButtonProps) {
  const pending = usePendingPress(onPress);
  const busy = busyProp || pending.pending;
  const off = disabled || busy;
  const v = VARIANTS[variant];
  const body = (
    <Pressable
      onPress={href ? undefined : pending.press}
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

/**
 * Press handler that refuses re-entry: a ref (not state) is set synchronously on the first press, so
 * a double click or a repeated Enter inside one frame cannot call `onPress` twice, even before React
 * has re-rendered the disabled button. Cleared when the returned promise settles (or at once for a
 * plain function).
 */
function usePendingPress(onPress: ButtonProps['onPress']) {
  const lock = useRef(false);
  const mounted = useRef(true);
  const [pending, setPending] = useState(false);
  useEffect(() => {
    mounted.current = true;
    return () => {
      mounted.current = false;
    };
  }, []);
  const press = useCallback(() => {
    if (lock.current || !onPress) return;
    lock.current = true;
    let out: void | Promise<unknown>;
    try {
      out = onPress();
    } catch (e) {
      lock.current = false;
      throw e;
    }
    if (out && typeof (out as Promise<unknown>).then === 'function') {
      setPending(true);
      const done = () => {
        lock.current = false;
        if (mounted.current) setPending(false);
      };
      (out as Promise<unknown>).then(done, done);
    } else {
      // A plain handler: unlock after this frame, so the click that triggered it cannot repeat inside it.
      setTimeout(() => {
        lock.current = false;
      }, 0);
    }
  }, [onPress]);
  return { press, pending };
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
