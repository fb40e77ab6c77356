/**
 * Results of the three deep checks: bootstrap p-values beside the asymptotic ones; the subset
 * sweep's best models per size and factor frequencies; rolling-window estimates as one chart per
 * factor with a band of ±z standard errors (victory, web SVG).
 */
import { useState } from 'react';
import { Text, View, type LayoutChangeEvent } from 'react-native';
import { VictoryArea, VictoryAxis, VictoryChart, VictoryLine } from 'victory';
import type { BootstrapResult, RollingResult, SubsetSweepResult } from '../lib/gmm/index';
import type { Job } from '../shared/jobs';
import { Caution } from './caution';
import { Num, formatNum } from './num';
import { Select } from './select';
import { colors, fonts, space, text } from './theme';

const cell = { flex: 1, minWidth: 64 } as const;

function Row({ cells, head, label }: { cells: React.ReactNode[]; head?: boolean; label?: string }) {
  return (
    <View
      role="row"
      aria-label={label}
      style={{ flexDirection: 'row', gap: space.sm, paddingVertical: 4, borderBottomWidth: 1, borderBottomColor: head ? colors.ink : colors.rule }}
    >
      {cells.map((c, i) => (
        <View key={i} role={head ? 'columnheader' : 'cell'} style={[cell, i === 0 ? { flex: 1.6 } : { alignItems: 'flex-end' }]}>
          {typeof c === 'string' ? <Text style={head ? text.label : text.body}>{c}</Text> : c}
        </View>
      ))}
    </View>
  );
}

const P_MARK = 0.05;

export function BootstrapResultView({ result }: { result: BootstrapResult }) {
  const rows: { name: string; stat: number; asy: number; boot: number; crit: number }[] = [
    { name: `J (df ${result.J.df})`, stat: result.J.stat, asy: result.J.asymptoticP, boot: result.J.bootstrapP, crit: result.J.critical95 },
    ...result.factors.map((f) => ({ name: `b of ${f.name} (|t|)`, stat: Math.abs(f.wald.stat), asy: f.wald.asymptoticP, boot: f.wald.bootstrapP, crit: f.wald.critical95 })),
    ...result.factors.flatMap((f) => (f.drop ? [{ name: `drop ${f.name} (χ²)`, stat: f.drop.stat, asy: f.drop.asymptoticP, boot: f.drop.bootstrapP, crit: f.drop.critical95 }] : [])),
  ];
  return (
    <View style={{ gap: space.sm }} aria-label="Bootstrap result">
      <Text style={text.muted}>
        {result.validDraws} of {result.draws} draws used ({result.scheme === 'block' ? `moving blocks of ${result.blockLength}` : 'iid'}, seed {result.seed}, T ={' '}
        {result.T}, {result.stage} stage). p-values marked * are below {P_MARK}.
      </Text>
      <View role="table" aria-label="Bootstrap p-values">
        <Row head cells={['test', 'statistic', 'asymptotic p', 'bootstrap p', 'bootstrap 5% critical']} />
        {rows.map((r) => (
          <Row
            key={r.name}
            label={r.name}
            cells={[r.name, <Num key="s" value={r.stat} decimals={3} />, <Num key="a" value={r.asy} decimals={3} marked={r.asy < P_MARK} />, <Num key="b" value={r.boot} decimals={3} marked={r.boot < P_MARK} />, <Num key="c" value={r.crit} decimals={3} />]}
          />
        ))}
      </View>
      {result.notes.map((n) => (
        <Text key={n} style={text.muted}>
          {n}
        </Text>
      ))}
      <Caution>Bootstrap p-values come from resampling the run's own sample under the null; they are evidence, not investment advice.</Caution>
    </View>
  );
}

export function SweepResultView({ result }: { result: SubsetSweepResult }) {
  return (
    <View style={{ gap: space.md }} aria-label="Subset sweep result">
      <Text style={text.muted}>
        {result.models} models estimated on the same {result.N} test assets (T = {result.T})
        {result.singular ? `; ${result.singular} singular models skipped` : ''}. HJ distance uses the second-moment weighting (comparable across models); the drop
        test compares each model with the full model under the full model's weighting.
      </Text>
      <View style={{ gap: space.xs }}>
        <Text style={text.strong}>Smallest models the drop test does not reject at {result.level}</Text>
        {result.adequate.length === 0 ? <Text style={text.muted}>Every smaller model is rejected against the full model.</Text> : null}
        <View role="table" aria-label="Adequate models">
          {result.adequate.length ? <Row head cells={['factors', 'HJ', 'drop χ²', 'df', 'p']} /> : null}
          {result.adequate.map((m) => (
            <Row key={m.factors.join('+')} label={m.factors.join(' + ')} cells={[m.factors.join(' + '), <Num key="h" value={m.hj} decimals={4} />, <Num key="d" value={m.drop} decimals={2} />, String(m.df), <Num key="p" value={m.p} decimals={3} />]} />
          ))}
        </View>
      </View>
      <View style={{ gap: space.xs }}>
        <Text style={text.strong}>Best models of each size by HJ distance</Text>
        <View role="table" aria-label="Best models by HJ distance">
          <Row head cells={['size · factors', 'HJ', 'drop χ²', 'p']} />
          {result.bestByHj.flatMap((g) =>
            g.models.slice(0, 3).map((m, i) => (
              <Row
                key={`${g.size}-${m.factors.join('+')}`}
                label={m.factors.join(' + ')}
                cells={[`${i === 0 ? `${g.size}: ` : '   '}${m.factors.join(' + ')}`, <Num key="h" value={m.hj} decimals={4} marked={i === 0} marker="◆" />, <Num key="d" value={m.drop} decimals={2} />, <Num key="p" value={m.p} decimals={3} />]}
              />
            )),
          )}
        </View>
      </View>
      <View style={{ gap: space.xs }}>
        <Text style={text.strong}>How often each factor is among the best models</Text>
        {[...result.factorFrequency]
          .sort((a, b) => b.share - a.share)
          .map((f) => (
            <View key={f.name} style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm }} aria-label={`${f.name}: ${Math.round(f.share * 100)}%`}>
              <Text style={[text.body, { width: 96 }]} numberOfLines={1}>
                {f.name}
              </Text>
              <View style={{ flex: 1, height: 10, backgroundColor: colors.paper, borderWidth: 1, borderColor: colors.rule }}>
                <View style={{ width: `${f.share * 100}%`, height: '100%', backgroundColor: colors.slate }} />
              </View>
              <Text style={[text.num, { width: 48, textAlign: 'right' }]}>{Math.round(f.share * 100)}%</Text>
            </View>
          ))}
      </View>
      <Caution>Which factors a sweep prefers is evidence about these assets and this sample, not investment advice.</Caution>
    </View>
  );
}

const axisStyle = {
  axis: { stroke: colors.rule },
  tickLabels: { fill: colors.slate, fontSize: 10, fontFamily: fonts.mono },
  grid: { stroke: colors.rule, strokeDasharray: '2,4' },
};

function FactorWindowChart({ result, k, what }: { result: RollingResult; k: number; what: 'b' | 'lambda' }) {
  const [w, setW] = useState(320);
  const onLayout = (e: LayoutChangeEvent) => setW(Math.max(240, Math.floor(e.nativeEvent.layout.width)));
  const pts = result.points.filter((p) => p.ok);
  const scale = what === 'lambda' ? 100 : 1;
  const data = pts.map((p, i) => {
    const est = (what === 'b' ? p.b[k] : p.lambda[k]) * scale;
    const se = (what === 'b' ? p.seB[k] : p.seLambda[k]) * scale;
    return { x: i, y: est, lo: est - result.z * se, hi: est + result.z * se, label: p.endDate ?? String(p.end) };
  });
  const name = result.factorNames[k];
  const title = `${what === 'b' ? 'b' : 'λ (% per period)'} of ${name}`;
  const ticks = data.length > 6 ? data.filter((_, i) => i % Math.ceil(data.length / 6) === 0).map((d) => d.x) : data.map((d) => d.x);
  return (
    <View style={{ flexGrow: 1, flexBasis: 320, minWidth: 0, gap: space.xs }} onLayout={onLayout} role="img" aria-label={`${title}, by window`}>
      <Text style={text.strong}>{title}</Text>
      {data.length === 0 ? (
        <Text style={text.muted}>No window could be estimated.</Text>
      ) : (
        <VictoryChart width={w} height={200} padding={{ top: 10, bottom: 36, left: 52, right: 30 }}>
          <VictoryAxis style={axisStyle} tickValues={ticks} tickFormat={(t: number) => data[t]?.label ?? ''} />
          <VictoryAxis dependentAxis style={axisStyle} tickFormat={(t: number) => formatNum(t, 2)} />
          <VictoryArea data={data.map((d) => ({ x: d.x, y: d.hi, y0: d.lo }))} style={{ data: { fill: colors.brassTint, stroke: 'none' } }} />
          <VictoryLine data={data.map((d) => ({ x: d.x, y: 0 }))} style={{ data: { stroke: colors.fog, strokeDasharray: '4,4', strokeWidth: 1 } }} />
          <VictoryLine data={data.map((d) => ({ x: d.x, y: d.y }))} style={{ data: { stroke: colors.ink, strokeWidth: 1.5 } }} />
        </VictoryChart>
      )}
    </View>
  );
}

export function RollingResultView({ result }: { result: RollingResult }) {
  const [what, setWhat] = useState<'b' | 'lambda'>('b');
  return (
    <View style={{ gap: space.md }} aria-label="Rolling window result">
      <Text style={text.muted}>
        {result.points.length} {result.kind} windows of {result.length} periods, step {result.step}; band ±{result.z.toFixed(2)} standard errors (level {result.level}).
        {result.failed ? ` ${result.failed} window(s) could not be estimated.` : ''} The x axis shows each window's last period.
      </Text>
      <Select
        label="Show"
        value={what}
        options={[
          { value: 'b', label: 'b (needed?)' },
          { value: 'lambda', label: 'λ (priced?)' },
        ]}
        onChange={setWhat}
      />
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
        {result.factorNames.map((n, k) => (
          <FactorWindowChart key={n} result={result} k={k} what={what} />
        ))}
      </View>
      {result.points.some((p) => !p.ok) ? (
        <Text style={text.muted}>
          Not estimated:{' '}
          {result.points
            .filter((p) => !p.ok)
            .slice(0, 5)
            .map((p) => `${p.startDate ?? p.start}–${p.endDate ?? p.end} (${p.reason})`)
            .join('; ')}
        </Text>
      ) : null}
    </View>
  );
}

/** The result view for a finished job of any kind. */
export function DeepCheckResult({ job }: { job: Job }) {
  if (!job.result) return null;
  if (job.kind === 'bootstrap') return <BootstrapResultView result={job.result as BootstrapResult} />;
  if (job.kind === 'subset-sweep') return <SweepResultView result={job.result as SubsetSweepResult} />;
  return <RollingResultView result={job.result as RollingResult} />;
}
