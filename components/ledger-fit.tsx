/** Model fit beside the ledger: J, HJ distance, GRS and Fama–MacBeth premia (plain and Shanken t). */
import { StyleSheet, Text, View } from 'react-native';
import type { LedgerResult } from '../shared/runs';
import { formatNum } from './num';
import { colors, fonts, radius, space, text } from './theme';

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

export function LedgerFit({ result }: { result: LedgerResult }) {
  const r = result;
  const level = r.options.level;
  const fm = r.famaMacBeth;
  const smallT = r.T < 10 * r.N;
  return (
    <View style={{ gap: space.md }}>
      <View style={styles.stats}>
        <Stat label="J test (overidentifying)" value={formatNum(r.J.stat, 2)} sub={`df ${r.J.df} · p ${formatNum(r.J.p, 3)}`} marked={r.J.p < level} />
        <Stat label="HJ distance" value={r.hj === null ? '—' : formatNum(r.hj, 4)} sub="at second-moment weighting" />
        {r.grs ? (
          <Stat label="GRS test" value={formatNum(r.grs.stat, 3)} sub={`F(${r.grs.df1}, ${r.grs.df2}) · p ${formatNum(r.grs.p, 3)}`} marked={r.grs.p < level} />
        ) : (
          <Stat label="GRS test" value="—" sub="needs every factor traded" />
        )}
        <Stat label="Sample" value={`T ${r.T}`} sub={`N ${r.N} · K ${r.K} · HAC lag ${r.lags}`} />
      </View>
      {smallT ? (
        <View style={styles.jWarn} role="note" aria-label="Caution about J">
          <Text style={styles.warnText}>
            ! T = {r.T} is less than 10·N = {10 * r.N}: the J test’s asymptotic p-value can mislead with this many test assets for this sample.
          </Text>
        </View>
      ) : null}
      {r.J.p < level ? <Text style={text.muted}>J rejects at {level}: the model leaves pricing errors the test assets do not forgive.</Text> : null}
      {fm ? (
        <View style={styles.table} role="table" aria-label="Fama–MacBeth premia">
          <View style={[styles.tr, styles.th]} role="row">
            <Text style={[styles.hcell, { flex: 1.3, textAlign: 'left' }]} role="columnheader">Fama–MacBeth</Text>
            <Text style={styles.hcell} role="columnheader">λ, %</Text>
            <Text style={styles.hcell} role="columnheader">t</Text>
            <Text style={styles.hcell} role="columnheader">t Shanken</Text>
            <Text style={styles.hcell} role="columnheader">p Shanken</Text>
          </View>
          {[...(fm.zeroBeta ? [{ ...fm.zeroBeta, name: 'zero-beta (intercept)' }] : []), ...fm.factors].map((c) => (
            <View key={c.name} style={styles.tr} role="row">
              <Text style={[text.body, { flex: 1.3 }]} role="cell">{c.name}</Text>
              <Text style={[styles.cell, c.pShanken < level && styles.marked]} role="cell">{formatNum(c.lambda * 100, 3)}{c.pShanken < level ? '*' : ' '}</Text>
              <Text style={[styles.cell, c.p < level && styles.marked]} role="cell">{formatNum(c.t, 2)}</Text>
              <Text style={[styles.cell, c.pShanken < level && styles.marked]} role="cell">{formatNum(c.tShanken, 2)}</Text>
              <Text style={[styles.cell, c.pShanken < level && styles.marked]} role="cell">{formatNum(c.pShanken, 3)}</Text>
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
  cell: { flex: 1, fontFamily: fonts.mono, fontSize: 14, color: colors.ink, textAlign: 'right', fontVariant: ['tabular-nums'] },
  marked: { fontFamily: fonts.monoStrong },
});
