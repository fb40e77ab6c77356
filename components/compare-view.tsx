/**
 * Two runs side by side: the model-comparison test (squared Sharpe ratios of the factors, or for
 * nested models the joint spanning test), ledgers with adjusted p, J and pricing errors, the nested
 * drop test when it applies, and CSV / LaTeX exports of it all.
 */
import { useState } from 'react';
import { Platform, StyleSheet, Text, View, type LayoutChangeEvent } from 'react-native';
import type { CompareResponse, Run } from '../shared/runs';
import { formatP } from '../shared/format';
import { useIsWide } from '../hooks/use-layout';
import { Card } from './card';
import { VerdictChip } from './chip';
import { formatNum } from './num';
import { RunStatusChip } from './run-summary';
import { Button } from './button';
import { colors, fonts, radius, space, text } from './theme';

/** Widths below which the ledger table gives way: verdict under the name, then the list layout. */
const TABLE_MIN = 440;
const VERDICT_COL_MIN = 600;

function MiniLedger({ run }: { run: Run }) {
  const [w, setW] = useState(0);
  const r = run.result;
  if (!r) return <Text style={text.body}>{run.status === 'failed' ? `Failed: ${run.error}` : `This run is ${run.status}.`}</Text>;
  const level = r.options.level;
  const factors = r.factors;
  const basis = r.verdictBasis;
  /** t and p of b and λ on the basis the verdicts rest on (robust SEs, bootstrap p where asked). */
  const onBasis = (f: (typeof factors)[number]) => {
    const rob = basis !== 'standard' && f.robust ? f.robust : null;
    const boot = basis === 'bootstrap' ? f.bootstrap : null;
    return {
      tB: rob ? rob.tB : f.tB,
      pB: boot?.pB ?? (rob ? rob.pB : f.pB),
      tLambda: rob ? rob.tLambda : f.tLambda,
      pLambda: boot?.pLambda ?? (rob ? rob.pLambda : f.pLambda),
    };
  };
  const measure = (e: LayoutChangeEvent) => setW(Math.floor(e.nativeEvent.layout.width));
  const verdictCol = w >= VERDICT_COL_MIN;
  return <View onLayout={measure}>{w === 0 ? null : w < TABLE_MIN ? list() : table()}</View>;

  function list() {
    return (
      <View style={styles.table} role="list" aria-label={`Ledger of run ${run.id}`}>
        {factors.map((f) => (
          <View key={f.name} style={[styles.tr, { alignItems: 'flex-start' }]} role="listitem">
            <View style={{ flex: 1, gap: 4 }}>
              <Text style={text.strong}>{f.name}</Text>
              <VerdictChip verdict={f.verdict} basis={basis} thinFlag={f.thinBeta?.flag ?? false} />
            </View>
            <View style={{ gap: 2 }}>
              <Text style={[styles.n, onBasis(f).pB < level && styles.m]} numberOfLines={1}>
                b {formatNum(f.b, 2)} ({formatNum(onBasis(f).tB, 1)}){onBasis(f).pB < level ? '*' : ' '}
              </Text>
              <Text style={[styles.n, onBasis(f).pLambda < level && styles.m]} numberOfLines={1}>
                λ% {formatNum(f.lambda * 100, 3)} ({formatNum(onBasis(f).tLambda, 1)}){onBasis(f).pLambda < level ? '*' : ' '}
              </Text>
              <Text style={[styles.n, { color: colors.slate }]} numberOfLines={1}>
                p Holm {formatP(f.pHolm)}
              </Text>
            </View>
          </View>
        ))}
      </View>
    );
  }

  function table() {
  return (
    <View style={styles.table} role="table" aria-label={`Ledger of run ${run.id}`}>
      <View style={[styles.tr, styles.th]} role="row">
        <Text role="columnheader" style={[styles.hc, styles.nameCol, { textAlign: 'left' }]}>
          Factor
        </Text>
        <Text role="columnheader" style={[styles.hc, styles.numCol]}>
          b (t)
        </Text>
        <Text role="columnheader" style={[styles.hc, styles.numCol]}>
          λ, % (t)
        </Text>
        <Text role="columnheader" style={[styles.hc, styles.pCol]}>
          p Holm
        </Text>
        {verdictCol ? (
          <Text role="columnheader" style={[styles.hc, styles.verdictCol, { textAlign: 'left' }]}>
            Verdict
          </Text>
        ) : null}
      </View>
      {factors.map((f) => (
        <View key={f.name} style={styles.tr} role="row">
          <View role="cell" style={[styles.nameCol, { gap: 4 }]}>
            <Text style={text.body}>{f.name}</Text>
            {verdictCol ? null : <VerdictChip verdict={f.verdict} basis={basis} thinFlag={f.thinBeta?.flag ?? false} />}
          </View>
          <Text role="cell" style={[styles.cellNum, styles.numCol, onBasis(f).pB < level && styles.m]} numberOfLines={1}>
            {formatNum(f.b, 2)} ({formatNum(onBasis(f).tB, 1)}){onBasis(f).pB < level ? '*' : ' '}
          </Text>
          <Text role="cell" style={[styles.cellNum, styles.numCol, onBasis(f).pLambda < level && styles.m]} numberOfLines={1}>
            {formatNum(f.lambda * 100, 3)} ({formatNum(onBasis(f).tLambda, 1)}){onBasis(f).pLambda < level ? '*' : ' '}
          </Text>
          <Text role="cell" style={[styles.cellNum, styles.pCol]} numberOfLines={1}>
            {formatP(f.pHolm)}
          </Text>
          {verdictCol ? (
            <View role="cell" style={styles.verdictCol}>
              <VerdictChip verdict={f.verdict} basis={basis} thinFlag={f.thinBeta?.flag ?? false} />
            </View>
          ) : null}
        </View>
      ))}
    </View>
  );
  }
}

function Side({ run, label }: { run: Run; label: string }) {
  const r = run.result;
  const level = r?.options.level ?? 0.05;
  return (
    <Card title={`${label}: run #${run.id}${run.specName ? ` · ${run.specName}` : ''}`} subtitle={`${run.libraryName}, edition ${run.editionNumber} · ${run.spec.stage} stage · ${run.authorName}`} style={{ flex: 1, minWidth: 0 }}>
      <RunStatusChip status={run.status} />
      {r ? (
        <Text style={text.muted}>
          Verdicts on the {r.verdictBasis} basis at level {r.options.level}; t and * follow that basis.
        </Text>
      ) : null}
      <MiniLedger run={run} />
      {r ? (
        <View style={{ gap: 2 }}>
          <Text style={styles.line}>
            J {formatNum(r.J.stat, 2)} · df {r.J.df} · p {formatP(r.J.p, { level })}
          </Text>
          <Text style={styles.line}>HJ {r.hj === null ? '—' : formatNum(r.hj, 4)} · T {r.T} · N {r.N}</Text>
          <Text style={styles.line}>
            mean |α| {formatNum((r.pricingErrors.reduce((s, e) => s + Math.abs(e.alpha), 0) / r.pricingErrors.length) * 100, 3)} % per period
          </Text>
        </View>
      ) : null}
      <Button label={`Open run ${run.id}`} href={`/runs/${run.id}`} compact />
    </Card>
  );
}

function PricingErrors({ a, b }: { a: Run; b: Run }) {
  if (!a.result || !b.result) return null;
  const bBy = new Map(b.result.pricingErrors.map((e) => [e.asset, e]));
  const rows = a.result.pricingErrors.map((e) => ({ asset: e.asset, a: e, b: bBy.get(e.asset) }));
  for (const e of b.result.pricingErrors) if (!rows.some((r) => r.asset === e.asset)) rows.push({ asset: e.asset, a: undefined as never, b: e });
  return (
    <View style={styles.table} role="table" aria-label="Pricing errors side by side">
      <View style={[styles.tr, styles.th]} role="row">
        <Text style={[styles.h, { flex: 1.5, textAlign: 'left' }]}>Test asset</Text>
        <Text style={styles.h}>α A, % (t)</Text>
        <Text style={styles.h}>α B, % (t)</Text>
      </View>
      {rows.map((r) => (
        <View key={r.asset} style={styles.tr} role="row">
          <Text style={[text.body, { flex: 1.5 }]}>{r.asset}</Text>
          <Text style={styles.n}>{r.a ? `${formatNum(r.a.alpha * 100, 3)} (${formatNum(r.a.t, 1)})` : '—'}</Text>
          <Text style={styles.n}>{r.b ? `${formatNum(r.b.alpha * 100, 3)} (${formatNum(r.b.t, 1)})` : '—'}</Text>
        </View>
      ))}
    </View>
  );
}

const theta = (x: number) => formatNum(x, 4);

/** The model-comparison test: squared Sharpe ratios (non-nested), or the joint spanning test (nested), or why neither applies. */
function ModelTest({ data, level }: { data: CompareResponse; level: number }) {
  const s = data.sharpe;
  const sp = data.sharpeSpanning;
  const ida = data.a.id;
  const idb = data.b.id;
  if (s) {
    const sig = s.p < level;
    const higher = s.diff > 0 ? `A (run #${ida})` : `B (run #${idb})`;
    return (
      <View style={{ gap: space.xs }} aria-label="Squared Sharpe ratio test">
        <View style={styles.thetaRow}>
          <Text style={styles.line}>
            θ A {theta(s.a.theta)} (se {theta(s.a.se)})
          </Text>
          <Text style={styles.line}>
            θ B {theta(s.b.theta)} (se {theta(s.b.se)})
          </Text>
        </View>
        <View style={styles.thetaRow} role="group" aria-label={`A − B ${theta(s.diff)} · se ${theta(s.se)} · z ${formatNum(s.z, 2)} · p ${formatP(s.p, { level })}${sig ? '*' : ''}`}>
          {[`A − B ${theta(s.diff)}`, `se ${theta(s.se)}`, `z ${formatNum(s.z, 2)}`, `p ${formatP(s.p, { level })}${sig ? '*' : ''}`].map((part, i) => (
            <Text key={i} style={[styles.big, sig && styles.m]} numberOfLines={1}>
              {i > 0 ? '· ' : ''}
              {part}
            </Text>
          ))}
        </View>
        <Text style={text.body}>
          {sig
            ? `Model ${higher}'s factors reach a significantly higher squared Sharpe ratio at ${level}: with traded factors, that model prices the other's factors and the test assets better.`
            : `No significant difference at ${level}: the data do not tell these two models apart by the squared Sharpe ratios of their factors.`}
        </Text>
        {s.shared.length ? (
          <Text style={text.muted}>
            Both models contain {s.shared.join(', ')}. Shared factors are allowed: the test compares the whole factor sets, and only the factors each model has on its own can make the difference.
          </Text>
        ) : (
          <Text style={text.muted}>The models share no factor.</Text>
        )}
        <Text style={text.muted}>
          θ: the estimated squared Sharpe ratio μ′Σ⁻¹μ per period of each model's factors; z from the HAC standard error of the difference (lag {s.lags}, T = {s.T}); two-sided normal p. Barillas, Kan, Robotti and Shanken (2020).
        </Text>
      </View>
    );
  }
  if (sp) {
    const sig = sp.p < level;
    return (
      <View style={{ gap: space.xs }} aria-label="Joint spanning test">
        <Text style={text.body}>
          Nested models: the joint spanning test of {sp.factors.join(', ')} on {sp.on.join(', ')} replaces the z test.
        </Text>
        <Text style={[styles.big, sig && styles.m]}>
          χ² {formatNum(sp.stat, 2)} · df {sp.df} · p {formatP(sp.p, { level })}
          {sig ? '*' : ''}
        </Text>
        <Text style={text.body}>
          {sig
            ? `${sp.factors.join(', ')} ${sp.factors.length === 1 ? 'is' : 'are'} not spanned at ${level}: the larger model (run #${sp.larger === 'a' ? ida : idb}) reaches a higher squared Sharpe ratio.`
            : `${sp.factors.join(', ')} ${sp.factors.length === 1 ? 'is' : 'are'} spanned at ${level}: the smaller model does as well.`}
        </Text>
        <Text style={text.muted}>Why: {sp.reason}</Text>
        <Text style={text.muted}>
          θ A {theta(sp.a.theta)} (se {theta(sp.a.se)}) · θ B {theta(sp.b.theta)} (se {theta(sp.b.se)}). Shared factors: {sp.shared.join(', ')}.
        </Text>
      </View>
    );
  }
  return <Text style={text.body}>{data.sharpeRefusal?.message ?? 'No model-comparison test.'}</Text>;
}

/** Same-origin download links of the compare view. */
function CompareExports({ a, b }: { a: number; b: number }) {
  const links: [string, 'csv' | 'tex'][] = [
    ['CSV', 'csv'],
    ['LaTeX', 'tex'],
  ];
  return (
    <View style={{ flexDirection: 'row', gap: space.md, flexWrap: 'wrap', alignItems: 'center' }}>
      <Text style={text.muted}>Export both ledgers and the tests:</Text>
      {links.map(([label, ext]) => {
        const href = `/api/v1/runs/compare/export.${ext}?a=${a}&b=${b}`;
        const webProps = Platform.OS === 'web' ? ({ href, hrefAttrs: { download: `keelson-compare-${a}-${b}.${ext}` } } as object) : {};
        return (
          <Text key={ext} role="link" style={styles.link} aria-label={`Export the comparison as ${label}`} {...webProps}>
            ↓ {label}
          </Text>
        );
      })}
    </View>
  );
}

export function CompareView({ data }: { data: CompareResponse }) {
  const wide = useIsWide();
  const n = data.nested;
  const level = data.a.result?.options.level ?? 0.05;
  return (
    <View style={{ gap: space.lg }}>
      <CompareExports a={data.a.id} b={data.b.id} />
      {data.basisNote ? (
        <Text style={text.body} role="note">
          {data.basisNote}
        </Text>
      ) : null}
      <Card
        title="Which model is better?"
        subtitle="Squared Sharpe ratio of each model's factors (traded factors, same edition, assets and window): the model whose factors reach the higher one prices better. Statistical evidence, not investment advice."
      >
        <ModelTest data={data} level={level} />
      </Card>
      <Card title="Nested drop test" subtitle="Same edition, assets, window and options, one factor set inside the other: χ² difference with the larger model’s second-stage weighting.">
        {n.nested && n.test ? (
          <View style={{ gap: space.xs }}>
            <Text style={text.body}>
              Run #{n.smallerRunId} drops {n.dropped.join(', ')} from run #{n.largerRunId}.
            </Text>
            <Text style={[styles.big, n.test.p < level && styles.m]}>
              χ² {formatNum(n.test.stat, 3)} · df {n.test.df} · p {formatP(n.test.p, { level })}
              {n.test.p < level ? '*' : ''}
            </Text>
            <Text style={text.muted}>
              {n.test.p < level
                ? `The larger model fits significantly better at ${level}: the dropped factors are needed.`
                : `No significant loss of fit at ${level}: the smaller model does as well.`}
            </Text>
          </View>
        ) : (
          <Text style={text.body}>{n.reason ?? 'No nested test.'}</Text>
        )}
      </Card>
      <View style={{ flexDirection: wide ? 'row' : 'column', gap: space.lg }}>
        <Side run={data.a} label="A" />
        <Side run={data.b} label="B" />
      </View>
      <Card title="Pricing errors">
        <PricingErrors a={data.a} b={data.b} />
      </Card>
    </View>
  );
}

const styles = StyleSheet.create({
  table: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md },
  tr: { flexDirection: 'row', alignItems: 'center', gap: space.sm, paddingHorizontal: space.sm, paddingVertical: 6, borderBottomWidth: 1, borderBottomColor: colors.rule },
  th: { backgroundColor: colors.paper },
  hc: { fontFamily: fonts.textStrong, fontSize: 13, color: colors.slate, textAlign: 'right' },
  h: { flex: 1, fontFamily: fonts.textStrong, fontSize: 13, color: colors.slate, textAlign: 'right' },
  // Fixed-width number columns: no flex shorthand (its 0% basis would override the width).
  nameCol: { flexGrow: 1, flexShrink: 1, flexBasis: 64, minWidth: 48 },
  numCol: { flexGrow: 0, flexShrink: 0, width: 120 },
  pCol: { flexGrow: 0, flexShrink: 0, width: 64 },
  verdictCol: { flexGrow: 1, flexShrink: 1, flexBasis: 120, minWidth: 0 },
  cellNum: { fontFamily: fonts.mono, fontSize: 12, color: colors.ink, textAlign: 'right', fontVariant: ['tabular-nums'] },
  thetaRow: { flexDirection: 'row', flexWrap: 'wrap', columnGap: space.lg, rowGap: 2 },
  link: { fontFamily: fonts.textStrong, fontSize: 14, color: colors.ink, textDecorationLine: 'underline' },
  n: { flex: 1, fontFamily: fonts.mono, fontSize: 12, color: colors.ink, textAlign: 'right', fontVariant: ['tabular-nums'] },
  m: { fontFamily: fonts.monoStrong },
  line: { fontFamily: fonts.mono, fontSize: 13, color: colors.ink },
  big: { fontFamily: fonts.mono, fontSize: 18, color: colors.ink },
});
