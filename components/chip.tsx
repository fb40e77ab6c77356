import { StyleSheet, Text, View } from 'react-native';
import { colors, fonts, radius, space } from './theme';

export type ChipShape = 'filled' | 'outlined' | 'dashed';
export type ChipTone = 'kelp' | 'rust' | 'brass' | 'slate' | 'fog';

export interface ChipProps {
  label: string;
  shape?: ChipShape;
  tone?: ChipTone;
  /** Longer accessible description (e.g. the test behind a verdict). */
  accessibilityLabel?: string;
}

const TONE: Record<ChipTone, string> = { kelp: colors.kelp, rust: colors.rust, brass: colors.brass, slate: colors.slate, fog: colors.fog };
const GLYPH: Record<ChipShape, string> = { filled: '\u25CF', outlined: '\u25CB', dashed: '\u25CC' };

/** A status chip that never relies on colour alone: words, a shape (filled/outlined/dashed) and a glyph. */
export function Chip({ label, shape = 'outlined', tone = 'slate', accessibilityLabel }: ChipProps) {
  const c = TONE[tone];
  const filled = shape === 'filled';
  return (
    <View
      style={[
        styles.chip,
        { borderColor: c, borderStyle: shape === 'dashed' ? 'dashed' : 'solid', backgroundColor: filled ? c : colors.card },
      ]}
      aria-label={accessibilityLabel ?? label}
    >
      <Text style={[styles.glyph, { color: filled ? colors.onDark : c }]} aria-hidden>
        {GLYPH[shape]}
      </Text>
      <Text style={[styles.text, { color: filled ? colors.onDark : colors.ink }]}>{label}</Text>
    </View>
  );
}

/** The four factor verdicts of the glossary. */
export type Verdict = 'needed and priced' | 'priced, not needed' | 'needed, not priced alone' | 'neither';

export const VERDICT_STYLE: Readonly<Record<Verdict, { shape: ChipShape; tone: ChipTone }>> = {
  'needed and priced': { shape: 'filled', tone: 'kelp' },
  'needed, not priced alone': { shape: 'outlined', tone: 'kelp' },
  'priced, not needed': { shape: 'outlined', tone: 'rust' },
  neither: { shape: 'dashed', tone: 'fog' },
};

/** Verdict chip for the factor ledger. */
export function VerdictChip({ verdict, accessibilityLabel }: { verdict: Verdict; accessibilityLabel?: string }) {
  return <Chip label={verdict} {...VERDICT_STYLE[verdict]} accessibilityLabel={accessibilityLabel ?? `Verdict: ${verdict}`} />;
}

const styles = StyleSheet.create({
  chip: {
    flexDirection: 'row',
    alignItems: 'center',
    alignSelf: 'flex-start',
    gap: space.xs,
    borderWidth: 1.5,
    borderRadius: radius.lg,
    paddingHorizontal: space.sm,
    paddingVertical: 2,
  },
  glyph: { fontSize: 11, lineHeight: 16 },
  text: { fontFamily: fonts.textStrong, fontSize: 12, lineHeight: 16 },
});
