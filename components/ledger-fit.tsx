/**
 * Model fit beside the ledger: J (with its weighting, the bootstrap p and the small-sample
 * caution), HJ distance, GRS, the iterations of an iterated run, and Fama–MacBeth premia (plain
 * and Shanken t). Every p through shared/format.ts's formatP at the run's level.
 */
import { StyleSheet, Text, View } from 'react-native';
import type { LedgerResult } from '../shared/runs';
import { formatFixed, formatP } from '../shared/format';
import { colors, fonts, radius, space, text } from './theme';

const formatNum = formatFixed;

const WEIGHTING_WORDS: Readonly<Record<LedgerResult['options']['weighting'], string>> = {
  identity: 'W = I (identity)',
  'second-moment': 'W = E_T[RR′]⁻¹ (second moment)',
  covariance: 'W = Cov_T(R)⁻¹ (covariance)',
};

/** Which weighting the J test used, in words. */
export function jWeighting(r: LedgerResult): string {
  const w = WEIGHTING_WORDS[r.options.weighting];
  if (r.stage === 'first') return `First stage, ${w}: J = α′ Var(α)⁺ α with the Moore–Penrose inverse (α the pricing errors).`;
  if (r.stage === 'second') return `Second stage: W = Ŝ⁻¹ from the first stage with ${w}; J = T·α′ Ŝ⁻¹ α.`;
  return `Iterated: W = Ŝ⁻¹ re-estimated until b settles (started from ${w}); J = T·α′ Ŝ⁻¹ α.`;
}

/** Iterations and convergence of an iterated run, in words (null for other stages). */
export function iterationText(r: LedgerResult): string | null {
  if (r.stage !== 'iterated') return null;
  return r.converged
    ? `Converged after ${r.iterations} iteration${r.iterations === 1 ? '' : 's'} (largest change in b below 1e-10 of the largest |b|).`
    : `Did not converge: stopped after ${r.iterations} iterations; the numbers are from the last iterate.`;
}

function Stat({ label, value, sub, marked }: { label: string; value: string; sub?: string; marked?: boolean }) {
  return (
    <View style={styles.stat}>
      <Text style={text.label}>{label}</Text>
      <Text style={[styles.big, marked && { fontFamily: fonts.monoStrong }]}>
        {value}
        {marked ? '*' : ''}
      </Text>
      {sub ? <Text style={styles.sub}>{sub}</Text> : null}
    </View>
  );
}

export function LedgerFit({ result, bootstrapPending = false }: { result: LedgerResult; bootstrapPending?: boolean }) {
  const r = result;
  const level = r.options.level;
  // A non-breaking space keeps "< 0.001" on one line in narrow columns.
  const P = (p: number | null | undefined) => formatP(p, { level, less: '<\u00a0' });
  const fm = r.famaMacBeth;
  const bootAsked = r.bootstrap !== null || r.options.bootstrap !== null || bootstrapPending;
  const iter = iterationText(r);
  return (
    <View style={{ gap: space.md }}>
      <View style={styles.stats}>
        <Stat
          label="J test (overidentifying)"
          value={formatNum(r.J.stat, 2)}
          sub={`df ${r.J.df} · p ${P(r.J.p)}${bootAsked ? ` · bootstrap p ${r.bootstrap ? P(r.bootstrap.pJ) : bootstrapPending ? 'pending' : '—'}` : ''}`}
          marked={r.J.p < level}
        />
        <Stat label="HJ distance" value={r.hj === null ? '—' : formatNum(r.hj, 4)} sub="at second-moment weighting" />
        {r.grs ? (
          <Stat label="GRS test" value={formatNum(r.grs.stat, 3)} sub={`F(${r.grs.df1}, ${r.grs.df2}) · p ${P(r.grs.p)}`} marked={r.grs.p < level} />
        ) : (
          <Stat label="GRS test" value="—" sub="needs every factor traded" />
        )}
        <Stat label="Sample" value={`T ${r.T}`} sub={`N ${r.N} · K ${r.K} · HAC lag ${r.lags}`} />
      </View>
      <View style={{ gap: 2 }} aria-label="How J was computed">
        <Text style={text.body}>{jWeighting(r)}</Text>
        {iter ? (
          <Text style={[text.body, !r.converged && { color: colors.rust, fontFamily: fonts.textStrong }]} aria-label="Iterations">
            {iter}
          </Text>
        ) : null}
        {r.bootstrap ? (
          <Text style={text.muted}>
            Bootstrap: {r.bootstrap.validDraws} of {r.bootstrap.draws} draws usable, {r.bootstrap.scheme === 'block' ? `moving blocks of ${r.bootstrap.blockLength}` : 'iid resampling'}, seed {r.bootstrap.seed}
            {' '}(recentred moments, Hall and Horowitz 1996).
          </Text>
        ) : null}
      </View>
      {r.caution ? (
        <View style={styles.jWarn} role="note" aria-label="Caution about J">
          <Text style={styles.warnText}>! {r.caution}</Text>
        </View>
      ) : null}
      {r.J.p < level ? <Text style={text.muted}>J rejects at {level}: the model leaves pricing errors the test assets do not forgive.</Text> : null}
      {fm ? (
        <View style={styles.table} role="table" aria-label="Fama–MacBeth premia">
          <View style={[styles.tr, styles.th]} role="row">
            <Text style={[styles.hcell, { flex: 1.2, textAlign: 'left' }]} role="columnheader">Fama–MacBeth</Text>
            <Text style={styles.hcell} role="columnheader">λ, %</Text>
            <Text style={[styles.hcell, { flex: 0.8 }]} role="columnheader">t</Text>
            <Text style={[styles.hcell, { flex: 0.9 }]} role="columnheader">t Shanken</Text>
            <Text style={[styles.hcell, { flex: 1.3 }]} role="columnheader">p Shanken</Text>
          </View>
          {[...(fm.zeroBeta ? [{ ...fm.zeroBeta, name: 'zero-beta (intercept)' }] : []), ...fm.factors].map((c) => (
            <View key={c.name} style={styles.tr} role="row">
              <Text style={[text.body, { flex: 1.2 }]} role="cell">{c.name}</Text>
              <Text style={[styles.cell, c.pShanken < level && styles.marked]} role="cell">{formatNum(c.lambda * 100, 3)}{c.pShanken < level ? '*' : ' '}</Text>
              <Text style={[styles.cell, { flex: 0.8 }, c.p < level && styles.marked]} role="cell">{formatNum(c.t, 2)}</Text>
              <Text style={[styles.cell, { flex: 0.9 }, c.pShanken < level && styles.marked]} role="cell">{formatNum(c.tShanken, 2)}</Text>
              <Text style={[styles.cell, { flex: 1.3 }, c.pShanken < level && styles.marked]} role="cell" numberOfLines={1}>
                {P(c.pShanken)}
              </Text>
            </View>
          ))}
          <Text style={[text.muted, { padding: space.sm }]}>
            Two-pass cross-sectional premia; the Shanken correction widens the standard error for estimated betas (multiplier 1 + {formatNum(fm.shankenC, 3)}).
          </Text>
        </View>
      ) : (
        <Text style={text.muted}>Fama–MacBeth could not be computed for this run.</Text>
      )}
    </View>
  );
}

const styles = StyleSheet.create({
  stats: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md },
  stat: { flexGrow: 1, flexBasis: 150, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.sm, padding: space.md, gap: 2 },
  big: { fontFamily: fonts.mono, fontSize: 22, color: colors.ink, fontVariant: ['tabular-nums'] },
  sub: { fontFamily: fonts.mono, fontSize: 12, color: colors.slate },
  jWarn: { borderWidth: 1, borderColor: colors.brass, backgroundColor: colors.brassTint, borderRadius: radius.sm, padding: space.sm },
  warnText: { fontFamily: fonts.text, fontSize: 13, color: colors.ink },
  table: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md },
  tr: { flexDirection: 'row', alignItems: 'center', paddingHorizontal: space.sm, paddingVertical: 6, borderBottomWidth: 1, borderBottomColor: colors.rule, gap: space.sm },
  th: { backgroundColor: colors.paper },
  hcell: { flex: 1, fontFamily: fonts.textStrong, fontSize: 13, color: colors.slate, textAlign: 'right' },
  cell: { flex: 1, fontFamily: fonts.mono, fontSize: 12.5, color: colors.ink, textAlign: 'right', fontVariant: ['tabular-nums'] },
  marked: { fontFamily: fonts.monoStrong },
});
