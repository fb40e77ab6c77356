/**
 * What each ledger test asks, with the numbers behind one factor's cell. Opened by one tap on a
 * ledger cell (table or card).
 */
import { Modal, Pressable, ScrollView, StyleSheet, Text, View } from 'react-native';
import type { LedgerResult } from '../shared/runs';
import { Button } from './button';
import { VerdictChip } from './chip';
import { formatNum } from './num';
import { colors, fonts, radius, space, text } from './theme';

export type LedgerTest = 'b' | 'lambda' | 'drop' | 'spanning' | 'thin' | 'verdict';
type Factor = LedgerResult['factors'][number];

export const TEST_TITLES: Record<LedgerTest, string> = {
  b: 'Needed? — SDF loading b',
  lambda: 'Priced? — risk premium λ',
  drop: 'Drop test',
  spanning: 'Spanning check',
  thin: 'Thin-beta flag',
  verdict: 'Verdict',
};

const QUESTIONS: Record<LedgerTest, string> = {
  b:
    'Does the SDF need this factor, given the other factors? The loading b_k in m = 1 − b′(f − μ) is tested against zero with a Wald z-test: ' +
    't = b / se(b), two-sided normal p-value; se(b) from the HAC long-run variance of b’s influence series.',
  lambda:
    'Is the factor’s risk priced in the cross-section of test assets? λ = Σ_f b is the premium per unit of beta; its standard error ' +
    'accounts for the estimation error in both b and Σ_f. A factor can be priced without being needed when it is correlated with a needed one.',
  drop:
    'Can the factor be dropped? The GMM objective is computed with and without the factor, both with the full model’s second-stage ' +
    'weighting matrix; T times the difference is χ² with one degree of freedom (Newey and West 1987). Not reported at the first stage.',
  spanning:
    'Do the other factors span this one? The factor is regressed on the others (OLS); a non-zero intercept α means it earns a mean return ' +
    'the others do not explain (Huberman and Kandel 1987). Only for traded factors; HAC standard error.',
  thin:
    'Is the factor weak? A HAC Wald test that the covariances of every test asset with this factor are jointly zero (Kan and Zhang 1999). ' +
    'When it does not reject at 10%, the factor is flagged: inference on its b and λ is unreliable.',
  verdict:
    'The verdict combines the two tests at the run’s level: b significant → needed; λ significant → priced. ' +
    'Needed and priced · priced, not needed · needed, not priced alone · neither.',
};

function Row({ label, value, strong }: { label: string; value: string; strong?: boolean }) {
  return (
    <View style={styles.row}>
      <Text style={text.body}>{label}</Text>
      <Text style={[styles.num, strong && { fontFamily: fonts.monoStrong }]}>{value}</Text>
    </View>
  );
}

export function LedgerNumbers({ f, test, level }: { f: Factor; test: LedgerTest; level: number }) {
  const sig = (p: number | undefined | null) => (p !== undefined && p !== null && p < level ? `significant at ${level}` : `not significant at ${level}`);
  switch (test) {
    case 'b':
      return (
        <View>
          <Row label="b" value={formatNum(f.b, 4)} strong />
          <Row label="standard error" value={formatNum(f.seB, 4)} />
          <Row label="t" value={formatNum(f.tB, 2)} />
          <Row label="p (two-sided)" value={formatNum(f.pB, 4)} />
          <Row label={`${Math.round((1 - level) * 100)}% interval`} value={`${formatNum(f.ciB[0], 3)} … ${formatNum(f.ciB[1], 3)}`} />
          <Text style={text.muted}>{sig(f.pB)}</Text>
        </View>
      );
    case 'lambda':
      return (
        <View>
          <Row label="λ (% per period)" value={formatNum(f.lambda * 100, 4)} strong />
          <Row label="standard error" value={formatNum(f.seLambda * 100, 4)} />
          <Row label="t" value={formatNum(f.tLambda, 2)} />
          <Row label="p (two-sided)" value={formatNum(f.pLambda, 4)} />
          <Row label={`${Math.round((1 - level) * 100)}% interval`} value={`${formatNum(f.ciLambda[0] * 100, 3)} … ${formatNum(f.ciLambda[1] * 100, 3)}`} />
          <Text style={text.muted}>{sig(f.pLambda)}</Text>
        </View>
      );
    case 'drop':
      return f.chi2Drop ? (
        <View>
          <Row label="χ² difference" value={formatNum(f.chi2Drop.stat, 3)} strong />
          <Row label="degrees of freedom" value={String(f.chi2Drop.df)} />
          <Row label="p" value={formatNum(f.chi2Drop.p, 4)} />
          <Text style={text.muted}>{f.chi2Drop.p < level ? 'Dropping it worsens the fit significantly.' : 'The model fits about as well without it.'}</Text>
        </View>
      ) : (
        <Text style={text.body}>Not reported: the drop test needs the second-stage weighting, and this run stopped at the first stage.</Text>
      );
    case 'spanning':
      return f.spanning ? (
        <View>
          <Row label="α (% per period)" value={formatNum(f.spanning.alpha * 100, 4)} strong />
          <Row label="standard error" value={formatNum(f.spanning.se * 100, 4)} />
          <Row label="t" value={formatNum(f.spanning.t, 2)} />
          <Row label="p" value={formatNum(f.spanning.p, 4)} />
        </View>
      ) : (
        <Text style={text.body}>{f.traded ? 'Could not be computed (the other factors are collinear).' : 'Not traded: the factor is not an excess return, so there is no spanning check.'}</Text>
      );
    case 'thin':
      return f.thinBeta ? (
        <View>
          <Row label="Wald χ²" value={formatNum(f.thinBeta.stat, 3)} strong />
          <Row label="degrees of freedom" value={String(f.thinBeta.df)} />
          <Row label="p" value={formatNum(f.thinBeta.p, 4)} />
          <Text style={text.muted}>{f.thinBeta.flag ? 'Flagged: betas indistinguishable from zero at 10%.' : 'Not flagged: the betas are distinguishable from zero at 10%.'}</Text>
        </View>
      ) : (
        <Text style={text.body}>Could not be computed (singular covariance).</Text>
      );
    case 'verdict':
      return (
        <View style={{ gap: space.xs }}>
          <VerdictChip verdict={f.verdict} />
          <Row label={`b: p = ${formatNum(f.pB, 4)}`} value={f.pB < level ? 'needed' : 'not needed'} />
          <Row label={`λ: p = ${formatNum(f.pLambda, 4)}`} value={f.pLambda < level ? 'priced' : 'not priced'} />
        </View>
      );
  }
}

export function LedgerDetailModal({ factor, test, level, onClose }: { factor: Factor | null; test: LedgerTest | null; level: number; onClose: () => void }) {
  const open = !!factor && !!test;
  return (
    <Modal visible={open} transparent animationType="fade" onRequestClose={onClose}>
      <Pressable style={styles.backdrop} onPress={onClose} aria-label="Close" />
      {open ? (
        <View style={styles.sheetWrap} pointerEvents="box-none">
          <View style={styles.sheet} role="dialog" aria-label={`${TEST_TITLES[test]} for ${factor.name}`}>
            <ScrollView contentContainerStyle={{ gap: space.md }}>
              <Text style={text.heading} role="heading" aria-level={2}>
                {TEST_TITLES[test]}: {factor.name}
              </Text>
              <Text style={text.body}>{QUESTIONS[test]}</Text>
              <LedgerNumbers f={factor} test={test} level={level} />
              <Button label="Close" onPress={onClose} compact />
            </ScrollView>
          </View>
        </View>
      ) : null}
    </Modal>
  );
}

const styles = StyleSheet.create({
  backdrop: { position: 'absolute', top: 0, left: 0, right: 0, bottom: 0, backgroundColor: 'rgba(16,39,58,0.35)' },
  sheetWrap: { flex: 1, alignItems: 'center', justifyContent: 'center', padding: space.lg },
  sheet: { backgroundColor: colors.card, borderRadius: radius.md, borderWidth: 1, borderColor: colors.rule, padding: space.lg, width: '100%', maxWidth: 520, maxHeight: '90%' },
  row: { flexDirection: 'row', justifyContent: 'space-between', gap: space.md, paddingVertical: 3, borderBottomWidth: 1, borderBottomColor: colors.rule },
  num: { fontFamily: fonts.mono, fontSize: 15, color: colors.ink, textAlign: 'right', fontVariant: ['tabular-nums'] },
});
