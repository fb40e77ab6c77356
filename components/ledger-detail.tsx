/**
 * What each ledger test asks, with the numbers behind one factor's cell: the standard, robust and
 * bootstrap p side by side, the Holm and BY adjusted p of the b tests (the only place phones show
 * them), and for the verdict its value on every basis with the caution. Opened by one tap on a
 * ledger cell (table or card).
 */
import { Modal, Pressable, ScrollView, StyleSheet, Text, View } from 'react-native';
import type { LedgerResult } from '../shared/runs';
import { formatFixed, formatP } from '../shared/format';
import { Button } from './button';
import { BASIS_LABEL, VerdictChip, type VerdictBasis } from './chip';
import { CAUTION_TEXT } from './caution';
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
    't = b / se(b), two-sided normal p-value; se(b) from the HAC long-run variance of b’s influence series. The standard se assumes the model prices ' +
    'the assets exactly; the robust se (first-stage runs) allows for the pricing errors every false model leaves (Kan and Robotti 2008).',
  lambda:
    'Is the factor’s risk priced in the cross-section of test assets? λ = Σ_f b is the premium per unit of beta; its standard error ' +
    'accounts for the estimation error in both b and Σ_f. A factor can be priced without being needed when it is correlated with a needed one.',
  drop:
    'Can the factor be dropped? The GMM objective is computed with and without the factor, both with the full model’s second-stage ' +
    'weighting matrix; T times the difference is χ² with one degree of freedom (Newey and West 1987). A first-stage run uses the second stage computed from it.',
  spanning:
    'Do the other factors span this one? The factor is regressed on the others (OLS); a non-zero intercept α means it earns a mean return ' +
    'the others do not explain (Huberman and Kandel 1987). Only for traded factors; HAC standard error.',
  thin:
    'Is the factor weak? A HAC Wald test that the covariances of every test asset with this factor are jointly zero (Kan and Zhang 1999). ' +
    'When it does not reject at 10%, the factor is flagged: inference on its b and λ is unreliable.',
  verdict:
    'The verdict combines the two tests at the run’s level: b significant → needed; λ significant → priced. ' +
    'Needed and priced · priced, not needed · needed, not priced alone · neither. The basis says whose p-values decide: standard, robust or bootstrap.',
};

function Row({ label, value, strong }: { label: string; value: string; strong?: boolean }) {
  return (
    <View style={styles.row} aria-label={`${label}: ${value}`}>
      <Text style={[text.body, { flexShrink: 1 }]}>{label}</Text>
      <Text style={[styles.num, strong && { fontFamily: fonts.monoStrong }]}>{value}</Text>
    </View>
  );
}

function Sub({ children }: { children: string }) {
  return <Text style={[text.label, { marginTop: space.sm }]}>{children}</Text>;
}

export interface LedgerNumbersProps {
  f: Factor;
  test: LedgerTest;
  result: LedgerResult;
  bootstrapPending?: boolean;
}

export function LedgerNumbers({ f, test, result, bootstrapPending = false }: LedgerNumbersProps) {
  const level = result.options.level;
  const P = (p: number | null | undefined) => formatP(p, { level });
  const sig = (p: number | undefined | null) => (p !== undefined && p !== null && p < level ? `significant at ${level}` : `not significant at ${level}`);
  const pct = `${Math.round((1 - level) * 100)}% interval`;
  const bootAsked = result.bootstrap !== null || result.options.bootstrap !== null || bootstrapPending;
  const boot = (p: number | null | undefined, what: string) =>
    bootAsked ? <Row label={`bootstrap p (${what})`} value={p !== null && p !== undefined ? P(p) : bootstrapPending ? 'pending' : 'not given'} /> : null;
  const robustMissing = <Text style={text.muted}>{result.robustNote ?? 'Robust standard errors are not available for this run.'}</Text>;
  const lag = result.lagWarning ? <Text style={styles.warn}>† {result.lagWarning}</Text> : null;
  switch (test) {
    case 'b':
      return (
        <View>
          <Row label="b" value={formatFixed(f.b, 4)} strong />
          <Sub>standard (assumes the model holds)</Sub>
          <Row label="standard error" value={formatFixed(f.seB, 4)} />
          <Row label="t" value={formatFixed(f.tB, 2)} />
          <Row label="p (two-sided)" value={P(f.pB)} />
          <Row label={pct} value={`${formatFixed(f.ciB[0], 3)} … ${formatFixed(f.ciB[1], 3)}`} />
          <Sub>robust (misspecification-robust)</Sub>
          {f.robust ? (
            <>
              <Row label="robust standard error" value={formatFixed(f.robust.seB, 4)} />
              <Row label="robust t" value={formatFixed(f.robust.tB, 2)} />
              <Row label="robust p" value={P(f.robust.pB)} />
              <Row label={`robust ${pct}`} value={`${formatFixed(f.robust.ciB[0], 3)} … ${formatFixed(f.robust.ciB[1], 3)}`} />
            </>
          ) : (
            robustMissing
          )}
          {bootAsked ? <Sub>bootstrap</Sub> : null}
          {boot(f.bootstrap?.pB, 'b')}
          <Sub>adjusted p across the ledger’s b tests</Sub>
          <Row label="Holm adjusted p" value={P(f.pHolm)} />
          <Row label="BY adjusted p" value={P(f.pBY)} />
          <Text style={text.muted}>
            Holm (1979) step-down and Benjamini–Yekutieli (2001) step-up adjustments of the {result.adjustedBasis} p-values of the {result.K} b tests of
            this run: testing many factors at once makes some look significant by chance.
          </Text>
          {lag}
          <Text style={text.muted}>{sig(f.robust && result.verdictBasis === 'robust' ? f.robust.pB : f.pB)} on the {result.verdictBasis} basis.</Text>
        </View>
      );
    case 'lambda':
      return (
        <View>
          <Row label="λ (% per period)" value={formatFixed(f.lambda * 100, 4)} strong />
          <Sub>standard (assumes the model holds)</Sub>
          <Row label="standard error" value={formatFixed(f.seLambda * 100, 4)} />
          <Row label="t" value={formatFixed(f.tLambda, 2)} />
          <Row label="p (two-sided)" value={P(f.pLambda)} />
          <Row label={pct} value={`${formatFixed(f.ciLambda[0] * 100, 3)} … ${formatFixed(f.ciLambda[1] * 100, 3)}`} />
          <Sub>robust (misspecification-robust)</Sub>
          {f.robust ? (
            <>
              <Row label="robust standard error" value={formatFixed(f.robust.seLambda * 100, 4)} />
              <Row label="robust t" value={formatFixed(f.robust.tLambda, 2)} />
              <Row label="robust p" value={P(f.robust.pLambda)} />
              <Row label={`robust ${pct}`} value={`${formatFixed(f.robust.ciLambda[0] * 100, 3)} … ${formatFixed(f.robust.ciLambda[1] * 100, 3)}`} />
            </>
          ) : (
            robustMissing
          )}
          {bootAsked ? <Sub>bootstrap</Sub> : null}
          {boot(f.bootstrap?.pLambda, 'λ')}
          {lag}
        </View>
      );
    case 'drop':
      return f.chi2Drop ? (
        <View>
          <Row label="χ² difference" value={formatFixed(f.chi2Drop.stat, 3)} strong />
          <Row label="degrees of freedom" value={String(f.chi2Drop.df)} />
          <Row label="p" value={P(f.chi2Drop.p)} />
          {boot(f.bootstrap?.pDrop, 'drop')}
          <Text style={text.muted}>{f.chi2Drop.p < level ? 'Dropping it worsens the fit significantly.' : 'The model fits about as well without it.'}</Text>
        </View>
      ) : (
        <Text style={text.body}>Not reported for this run (the second-stage weighting it needs could not be computed).</Text>
      );
    case 'spanning':
      return f.spanning ? (
        <View>
          <Row label="α (% per period)" value={formatFixed(f.spanning.alpha * 100, 4)} strong />
          <Row label="standard error" value={formatFixed(f.spanning.se * 100, 4)} />
          <Row label="t" value={formatFixed(f.spanning.t, 2)} />
          <Row label="p" value={P(f.spanning.p)} />
        </View>
      ) : (
        <Text style={text.body}>{f.traded ? 'Could not be computed (the other factors are collinear).' : 'Not traded: the factor is not an excess return, so there is no spanning check.'}</Text>
      );
    case 'thin':
      return f.thinBeta ? (
        <View style={{ gap: space.xs }}>
          <Text style={f.thinBeta.flag ? styles.flag : text.strong}>{f.thinBeta.flag ? '⚑ Flagged: b and λ inference for this factor is unreliable' : 'No flag'}</Text>
          <Row label="Wald χ²" value={formatFixed(f.thinBeta.stat, 3)} strong />
          <Row label="degrees of freedom" value={String(f.thinBeta.df)} />
          <Row label="p" value={formatP(f.thinBeta.p, { level: 0.1 })} />
          <Text style={text.muted}>
            {f.thinBeta.flag ? 'The betas are indistinguishable from zero at 10%.' : 'The betas are distinguishable from zero at 10%.'}
          </Text>
        </View>
      ) : (
        <Text style={text.body}>Could not be computed (singular covariance).</Text>
      );
    case 'verdict': {
      const bases: VerdictBasis[] = ['standard', 'robust', 'bootstrap'];
      const pOn = (b: VerdictBasis, which: 'b' | 'λ') => {
        if (b === 'standard') return which === 'b' ? f.pB : f.pLambda;
        if (b === 'robust') return f.robust ? (which === 'b' ? f.robust.pB : f.robust.pLambda) : null;
        return f.bootstrap ? (which === 'b' ? f.bootstrap.pB : f.bootstrap.pLambda) : null;
      };
      return (
        <View style={{ gap: space.xs }}>
          <VerdictChip verdict={f.verdict} basis={result.verdictBasis} thinFlag={!!f.thinBeta?.flag} />
          <Text style={text.muted}>
            The headline verdict rests on the {result.verdictBasis} basis
            {result.basis !== result.verdictBasis ? ` (the ${result.basis} basis was asked for; ${result.basis === 'bootstrap' ? 'its bootstrap has not finished' : 'it is not available for this run'})` : ''}.
          </Text>
          <Sub>the verdict on each basis</Sub>
          {bases.map((b) => {
            const v = f.verdicts[b];
            return (
              <View key={b} style={styles.basisRow} aria-label={`${BASIS_LABEL[b]}: ${v ?? 'not available'}`}>
                <Text style={text.strong}>
                  {BASIS_LABEL[b]}
                  {b === result.verdictBasis ? ' (used)' : ''}: {v ?? (b === 'bootstrap' && bootstrapPending ? 'pending' : 'not available')}
                </Text>
                {v ? (
                  <Text style={styles.smallNum}>
                    p(b) {P(pOn(b, 'b'))} · p(λ) {P(pOn(b, 'λ') ?? (b === 'bootstrap' ? (f.robust?.pLambda ?? f.pLambda) : null))}
                  </Text>
                ) : null}
              </View>
            );
          })}
          {f.thinBeta?.flag ? <Text style={styles.flag}>⚑ Thin-beta flag: its betas are indistinguishable from zero, so this verdict is unreliable.</Text> : null}
          {result.caution ? <Text style={styles.warn}>{result.caution}</Text> : null}
          <Text style={styles.caution} role="note">
            {CAUTION_TEXT}
          </Text>
        </View>
      );
    }
  }
}

export interface LedgerDetailModalProps {
  result: LedgerResult;
  factor: Factor | null;
  test: LedgerTest | null;
  bootstrapPending?: boolean;
  onClose: () => void;
}

export function LedgerDetailModal({ result, factor, test, bootstrapPending, onClose }: LedgerDetailModalProps) {
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
              <LedgerNumbers f={factor} test={test} result={result} bootstrapPending={bootstrapPending} />
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
  basisRow: { paddingVertical: 4, borderBottomWidth: 1, borderBottomColor: colors.rule, gap: 2 },
  smallNum: { fontFamily: fonts.mono, fontSize: 13, color: colors.slate },
  warn: { fontFamily: fonts.text, fontSize: 13, color: colors.ink, backgroundColor: colors.brassTint, padding: space.sm, borderRadius: radius.sm, marginTop: space.xs },
  flag: { fontFamily: fonts.textStrong, fontSize: 14, color: colors.rust },
  caution: { fontFamily: fonts.textStrong, fontSize: 13, color: colors.ink, marginTop: space.xs },
});
