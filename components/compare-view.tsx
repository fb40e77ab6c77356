/** Two runs side by side: ledgers, J and pricing errors, and the nested drop test when it applies. */
import { StyleSheet, Text, View } from 'react-native';
import type { CompareResponse, Run } from '../shared/runs';
import { useIsWide } from '../hooks/use-layout';
import { Card } from './card';
import { VerdictChip } from './chip';
import { formatNum } from './num';
import { RunStatusChip } from './run-summary';
import { Button } from './button';
import { colors, fonts, radius, space, text } from './theme';

function MiniLedger({ run }: { run: Run }) {
  const wide = useIsWide();
  const r = run.result;
  if (!r) return <Text style={text.body}>{run.status === 'failed' ? `Failed: ${run.error}` : `This run is ${run.status}.`}</Text>;
  const level = r.options.level;
  if (!wide)
    return (
      <View style={styles.table} role="list" aria-label={`Ledger of run ${run.id}`}>
        {r.factors.map((f) => (
          <View key={f.name} style={[styles.tr, { alignItems: 'flex-start' }]} role="listitem">
            <View style={{ flex: 1, gap: 4 }}>
              <Text style={text.strong}>{f.name}</Text>
              <VerdictChip verdict={f.verdict} />
            </View>
            <View style={{ gap: 2 }}>
              <Text style={[styles.n, f.pB < level && styles.m]} numberOfLines={1}>
                b {formatNum(f.b, 2)} ({formatNum(f.tB, 1)}){f.pB < level ? '*' : ' '}
              </Text>
              <Text style={[styles.n, f.pLambda < level && styles.m]} numberOfLines={1}>
                λ% {formatNum(f.lambda * 100, 3)} ({formatNum(f.tLambda, 1)}){f.pLambda < level ? '*' : ' '}
              </Text>
            </View>
          </View>
        ))}
      </View>
    );
  return (
    <View style={styles.table} role="table" aria-label={`Ledger of run ${run.id}`}>
      <View style={[styles.tr, styles.th]} role="row">
        <Text style={[styles.h, { flex: 1.2, textAlign: 'left' }]}>Factor</Text>
        <Text style={[styles.h, styles.numCol]}>b (t)</Text>
        <Text style={[styles.h, styles.numCol]}>λ, % (t)</Text>
        <Text style={[styles.h, { flex: 1.6, textAlign: 'left' }]}>Verdict</Text>
      </View>
      {r.factors.map((f) => (
        <View key={f.name} style={styles.tr} role="row">
          <Text style={[text.body, { flex: 1.2 }]}>{f.name}</Text>
          <Text style={[styles.n, styles.numCol, f.pB < level && styles.m]} numberOfLines={1}>
            {formatNum(f.b, 2)} ({formatNum(f.tB, 1)}){f.pB < level ? '*' : ' '}
          </Text>
          <Text style={[styles.n, styles.numCol, f.pLambda < level && styles.m]} numberOfLines={1}>
            {formatNum(f.lambda * 100, 3)} ({formatNum(f.tLambda, 1)}){f.pLambda < level ? '*' : ' '}
          </Text>
          <View style={{ flex: 1.6 }}>
            <VerdictChip verdict={f.verdict} />
          </View>
        </View>
      ))}
    </View>
  );
}

function Side({ run, label }: { run: Run; label: string }) {
  const r = run.result;
  return (
    <Card title={`${label}: run #${run.id}${run.specName ? ` · ${run.specName}` : ''}`} subtitle={`${run.libraryName}, edition ${run.editionNumber} · ${run.spec.stage} stage · ${run.authorName}`} style={{ flex: 1, minWidth: 0 }}>
      <RunStatusChip status={run.status} />
      <MiniLedger run={run} />
      {r ? (
        <View style={{ gap: 2 }}>
          <Text style={styles.line}>
            J {formatNum(r.J.stat, 2)} · df {r.J.df} · p {formatNum(r.J.p, 3)}
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

export function CompareView({ data }: { data: CompareResponse }) {
  const wide = useIsWide();
  const n = data.nested;
  const level = data.a.result?.options.level ?? 0.05;
  return (
    <View style={{ gap: space.lg }}>
      <Card title="Nested drop test" subtitle="Same edition, assets, window and options, one factor set inside the other: χ² difference with the larger model’s second-stage weighting.">
        {n.nested && n.test ? (
          <View style={{ gap: space.xs }}>
            <Text style={text.body}>
              Run #{n.smallerRunId} drops {n.dropped.join(', ')} from run #{n.largerRunId}.
            </Text>
            <Text style={[styles.big, n.test.p < level && styles.m]}>
              χ² {formatNum(n.test.stat, 3)} · df {n.test.df} · p {formatNum(n.test.p, 4)}
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
  h: { flex: 1, fontFamily: fonts.textStrong, fontSize: 13, color: colors.slate, textAlign: 'right' },
  numCol: { flex: 0, width: 112 },
  n: { flex: 1, fontFamily: fonts.mono, fontSize: 12, color: colors.ink, textAlign: 'right', fontVariant: ['tabular-nums'] },
  m: { fontFamily: fonts.monoStrong },
  line: { fontFamily: fonts.mono, fontSize: 13, color: colors.ink },
  big: { fontFamily: fonts.mono, fontSize: 18, color: colors.ink },
});
