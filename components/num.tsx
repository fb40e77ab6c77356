import { StyleSheet, Text, type StyleProp, type TextStyle } from 'react-native';
import { formatFixed } from '../shared/format';
import { colors, fonts } from './theme';

/** Formats a number with fixed decimals and a true minus sign; null/undefined/non-finite → "—" (shared/format.ts's formatFixed). */
export function formatNum(value: number | null | undefined, decimals = 3): string {
  return formatFixed(value, decimals);
}

export interface NumProps {
  value: number | null | undefined;
  decimals?: number;
  /** Text after the number (e.g. "%"); kept in the same face. */
  suffix?: string;
  /** Significant cell: heavier weight plus a marker, never colour alone. */
  marked?: boolean;
  /** Marker glyph shown after a marked number. */
  marker?: string;
  muted?: boolean;
  style?: StyleProp<TextStyle>;
  accessibilityLabel?: string;
}

/** Right-aligned number in IBM Plex Mono (tabular figures) with fixed decimals. */
export function Num({ value, decimals = 3, suffix, marked, marker = '*', muted, style, accessibilityLabel }: NumProps) {
  const shown = formatNum(value, decimals) + (suffix && formatNum(value, decimals) !== '—' ? suffix : '');
  return (
    <Text
      style={[styles.num, marked && styles.marked, muted && { color: colors.slate }, style]}
      aria-label={accessibilityLabel}
      numberOfLines={1}
    >
      {shown}
      <Text style={styles.marker}>{marked ? marker : ' '}</Text>
    </Text>
  );
}

const styles = StyleSheet.create({
  num: { fontFamily: fonts.mono, fontSize: 15, color: colors.ink, textAlign: 'right', fontVariant: ['tabular-nums'] },
  marked: { fontFamily: fonts.monoStrong },
  marker: { fontFamily: fonts.monoStrong },
});
