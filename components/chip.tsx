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

/** The basis a verdict rests on (glossary: standard, robust, bootstrap). */
export type VerdictBasis = 'standard' | 'robust' | 'bootstrap';

/** The basis in words, as chips and the ledger name it. */
export const BASIS_LABEL: Readonly<Record<VerdictBasis, string>> = {
  standard: 'standard basis',
  robust: 'robust basis',
  bootstrap: 'bootstrap basis',
};

export interface VerdictChipProps {
  verdict: Verdict;
  /** The basis the verdict rests on; shown as a second line. */
  basis?: VerdictBasis;
  /** The factor carries a thin-beta flag: a third line in rust with a flag glyph and words. */
  thinFlag?: boolean;
  accessibilityLabel?: string;
}

/**
 * Verdict chip for the factor ledger: the verdict in words with its shape, the basis it rests on,
 * and, for a factor with a thin-beta flag, an unmistakable flag line (glyph, words and a rust rule).
 */
export function VerdictChip({ verdict, basis, thinFlag, accessibilityLabel }: VerdictChipProps) {
  if (!basis && !thinFlag) return <Chip label={verdict} {...VERDICT_STYLE[verdict]} accessibilityLabel={accessibilityLabel ?? `Verdict: ${verdict}`} />;
  const { shape, tone } = VERDICT_STYLE[verdict];
  const c = TONE[tone];
  const filled = shape === 'filled';
  const label = accessibilityLabel ?? `Verdict: ${verdict}${basis ? `, on the ${basis} basis` : ''}${thinFlag ? ', thin-beta flag: inference unreliable' : ''}`;
  return (
    <View style={[styles.verdict, thinFlag && styles.flagged]} aria-label={label}>
      <View
        style={[
          styles.chip,
          { alignSelf: 'stretch', borderColor: c, borderStyle: shape === 'dashed' ? 'dashed' : 'solid', backgroundColor: filled ? c : colors.card },
        ]}
      >
        <Text style={[styles.glyph, { color: filled ? colors.onDark : c }]} aria-hidden>
          {GLYPH[shape]}
        </Text>
        <Text style={[styles.text, { color: filled ? colors.onDark : colors.ink, flexShrink: 1 }]}>{verdict}</Text>
      </View>
      {basis ? <Text style={styles.basis}>{BASIS_LABEL[basis]}</Text> : null}
      {thinFlag ? <Text style={styles.flagText}>⚑ thin β: unreliable</Text> : null}
    </View>
  );
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
  verdict: { alignSelf: 'flex-start', gap: 1, maxWidth: '100%' },
  flagged: { borderLeftWidth: 3, borderLeftColor: colors.rust, paddingLeft: space.xs },
  basis: { fontFamily: fonts.text, fontSize: 11, lineHeight: 14, color: colors.slate, paddingHorizontal: space.xs },
  flagText: { fontFamily: fonts.textStrong, fontSize: 11, lineHeight: 14, color: colors.rust, paddingHorizontal: space.xs },
  glyph: { fontSize: 11, lineHeight: 16 },
  text: { fontFamily: fonts.textStrong, fontSize: 12, lineHeight: 16 },
});
