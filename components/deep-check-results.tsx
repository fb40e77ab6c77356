/**
 * Results of the deep checks: bootstrap p-values beside the asymptotic ones; the subset sweep's
 * best models per size, factor frequencies, each candidate's adjusted p with the t ≥ 3.0 reference
 * line, and the ranking by squared Sharpe ratio; rolling-window estimates as one chart per factor
 * with a band of ±z standard errors; the hold-out check's pricing errors, and per block for the
 * rolling hold-out (victory, web SVG).
 */
import { useRef, useState, type ReactNode } from 'react';
import { Text, View, type LayoutChangeEvent } from 'react-native';
import { VictoryArea, VictoryAxis, VictoryBar, VictoryChart, VictoryLine } from 'victory';
import { HLZ_T_HURDLE } from '../lib/gmm/multiple-testing';
import type { BootstrapJobResult, HoldoutJobResult, RollingJobResult, SubsetSweepJobResult } from '../shared/deep-check-results';
import type { Job } from '../shared/jobs';
import { gmmFailureMessage } from '../shared/gmm-messages';
import { formatP } from '../shared/format';
import { Caution } from './caution';
import { ChartDownload } from './chart-download';
import { edgeAnchor, formatTick, labelIndices, monoWidth, niceTicks } from './library-chart';
import { Num, formatNum } from './num';
import { Select } from './select';
import { colors, fonts, space, text } from './theme';

/** A number cell: formatted with fixed decimals, optionally marked (weight + glyph). */
interface NumCell {
  value: number | null | undefined;
  decimals: number;
  marked?: boolean;
  marker?: string;
}
type Cell = NumCell | string;

interface GridRow {
  key: string;
  label: string;
  /** First cell: the names (wraps at spaces); then one cell per number column. */
  name: string;
  cells: Cell[];
}

const GAP = space.sm;
/** IBM Plex Mono at 15 px advances 9 px a character; Inter semibold at 13 px about 7.3 px. */
const MONO_PX = 9;
const LABEL_PX = 7.3;
const NAME_MIN = 128;

function cellText(c: Cell): string {
  return typeof c === 'string' ? c : formatNum(c.value, c.decimals);
}

/**
 * A results table whose number columns are as wide as their widest entry (never clipped, never
 * shrunk) and whose first column takes the rest, wrapping names at spaces. When the numbers and a
 * readable name column do not fit side by side (phones), each row puts its names on a line of their
 * own with the numbers below, still in their columns.
 */
function Grid({ label, head, rows }: { label: string; head: string[]; rows: GridRow[] }) {
  const [w, setW] = useState(0);
  const widths = head.slice(1).map((h, j) => {
    // The marker glyph ◆ comes from a fallback face, wider than a mono cell.
    const num = Math.max(0, ...rows.map((r) => cellText(r.cells[j]!).length * MONO_PX + (typeof r.cells[j] !== 'string' && r.cells[j]!.marker && r.cells[j]!.marker !== '*' ? 16 : MONO_PX))) + 2;
    const word = Math.max(...h.split(/\s+/).map((x) => x.length)) * LABEL_PX + 2;
    return Math.ceil(Math.max(num, word, 28));
  });
  const numbers = widths.reduce((a, b) => a + b, 0) + GAP * widths.length;
  const stacked = w > 0 && w < NAME_MIN + numbers;
  const onLayout = (e: LayoutChangeEvent) => setW(Math.floor(e.nativeEvent.layout.width));
  const numberCells = (cells: ReactNode[], isHead: boolean) =>
    cells.map((c, j) => (
      <View key={j} role={isHead ? 'columnheader' : 'cell'} style={{ minWidth: widths[j], flexShrink: 0, alignItems: 'flex-end' }}>
        {c}
      </View>
    ));
  const line = (name: ReactNode, cells: ReactNode[], isHead: boolean, key: string, aria?: string) => {
    const border = { borderBottomWidth: 1, borderBottomColor: isHead ? colors.ink : colors.rule, paddingVertical: 4 };
    const nameCell = (
      <View role={isHead ? 'columnheader' : 'cell'} style={stacked ? undefined : { flex: 1, minWidth: 0 }}>
        {name}
      </View>
    );
    if (!stacked) {
      return (
        <View key={key} role="row" aria-label={aria} style={[{ flexDirection: 'row', gap: GAP }, border]}>
          {nameCell}
          {numberCells(cells, isHead)}
        </View>
      );
    }
    return (
      <View key={key} role="row" aria-label={aria} style={[{ gap: 2 }, border]}>
        {nameCell}
        <View style={{ flexDirection: 'row', gap: GAP, justifyContent: 'flex-end' }}>{numberCells(cells, isHead)}</View>
      </View>
    );
  };
  return (
    <View role="table" aria-label={label} onLayout={onLayout}>
      {line(
        <Text style={text.label}>{head[0]}</Text>,
        head.slice(1).map((h) => (
          <Text key={h} style={[text.label, { textAlign: 'right' }]}>
            {h}
          </Text>
        )),
        true,
        'head',
      )}
      {rows.map((r) =>
        line(
          <Text style={text.body}>{r.name}</Text>,
          r.cells.map((c, j) =>
            typeof c === 'string' ? (
              <Text key={j} style={[text.num, { textAlign: 'right' }]}>
                {c}
                {' '}
              </Text>
            ) : (
              <Num key={j} value={c.value} decimals={c.decimals} marked={c.marked} marker={c.marker} />
            ),
          ),
          false,
          r.key,
          r.label,
        ),
      )}
    </View>
  );
}

const P_MARK = 0.05;

export function BootstrapResultView({ result }: { result: BootstrapJobResult }) {
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
      <Grid
        label="Bootstrap p-values"
        head={['test', 'statistic', 'p', 'bootstrap p', '5% critical']}
        rows={rows.map((r) => ({
          key: r.name,
          label: r.name,
          name: r.name,
          cells: [
            { value: r.stat, decimals: 3 },
            { value: r.asy, decimals: 3, marked: r.asy < P_MARK },
            { value: r.boot, decimals: 3, marked: r.boot < P_MARK },
            { value: r.crit, decimals: 3 },
          ],
        }))}
      />
      <Text style={text.muted}>p: asymptotic (χ² or normal); bootstrap p and the 5% critical value come from the draws.</Text>
      {result.notes.map((n) => (
        <Text key={n} style={text.muted}>
          {n}
        </Text>
      ))}
      <Caution>Bootstrap p-values come from resampling the run's own sample under the null; they are evidence, not investment advice.</Caution>
    </View>
  );
}

export function SweepResultView({ result }: { result: SubsetSweepJobResult }) {
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
        {result.adequate.length ? (
          <Grid
            label="Adequate models"
            head={['factors', 'HJ', 'drop χ²', 'df', 'p']}
            rows={result.adequate.map((m) => ({
              key: m.factors.join('+'),
              label: m.factors.join(' + '),
              name: m.factors.join(' + '),
              cells: [{ value: m.hj, decimals: 4 }, { value: m.drop, decimals: 2 }, String(m.df), { value: m.p, decimals: 3 }],
            }))}
          />
        ) : null}
      </View>
      <View style={{ gap: space.xs }}>
        <Text style={text.strong}>Best models of each size by HJ distance</Text>
        <Grid
          label="Best models by HJ distance"
          head={['size · factors', 'HJ', 'drop χ²', 'p']}
          rows={result.bestByHj.flatMap((g) =>
            g.models.slice(0, 3).map((m, i) => ({
              key: `${g.size}-${m.factors.join('+')}`,
              label: m.factors.join(' + '),
              name: `${i === 0 ? `${g.size}: ` : '   '}${m.factors.join(' + ')}`,
              cells: [{ value: m.hj, decimals: 4, marked: i === 0, marker: '◆' }, { value: m.drop, decimals: 2 }, { value: m.p, decimals: 3 }],
            })),
          )}
        />
        <Text style={text.muted}>◆ the smallest HJ distance of its size.</Text>
      </View>
      <View style={{ gap: space.xs }}>
        <Text style={text.strong}>How often each factor is among the best models</Text>
        <FrequencyChart result={result} />
      </View>
      <CandidateTests result={result} />
      <ThetaRanking result={result} />
      <Caution>Which factors a sweep prefers is evidence about these assets and this sample, not investment advice.</Caution>
    </View>
  );
}

/** Each candidate's b test in the full model, adjusted across all K candidates (Holm; Benjamini–Yekutieli), and |t| against the t ≥ 3.0 reference line. */
function CandidateTests({ result }: { result: SubsetSweepJobResult }) {
  const lv = result.level;
  return (
    <View style={{ gap: space.xs }}>
      <Text style={text.strong}>Each candidate’s b test, adjusted for trying {result.K}</Text>
      <Grid
        label="Candidates' adjusted p"
        head={['candidate', '|t|', 'p', 'p Holm', 'p BY']}
        rows={result.candidates.map((c) => ({
          key: c.name,
          label: c.name,
          name: c.traded === false ? `${c.name} (not traded)` : c.name,
          cells: [{ value: Math.abs(c.tB), decimals: 2, marked: Math.abs(c.tB) >= HLZ_T_HURDLE, marker: '◆' }, formatP(c.pB), formatP(c.pHolm), formatP(c.pBY)],
        }))}
      />
      <Text style={text.muted}>
        p: the full model’s b test of each candidate. p Holm controls the chance of any false discovery among the {result.K} tests; p BY (Benjamini–Yekutieli) the expected share of false discoveries, under any dependence. Compare them with your level {lv}.
      </Text>
      <TChart result={result} />
    </View>
  );
}

/** |t| of each candidate's b as horizontal bars, with the t = 3.0 reference line (Harvey, Liu and Zhu 2016). */
function TChart({ result }: { result: SubsetSweepJobResult }) {
  const [w, setW] = useState(0);
  const ref = useRef<View>(null);
  const c = result.candidates;
  const n = c.length;
  const font = 11;
  const maxName = Math.max(4, Math.floor((w * 0.4) / (font * 0.6)));
  const names = c.map((f) => (f.name.length > maxName ? `${f.name.slice(0, maxName - 1)}…` : f.name));
  const left = Math.min(Math.ceil(w * 0.4), Math.max(0, ...names.map((x) => monoWidth(x, font)))) + 12;
  const pad = { top: 8, bottom: 28, left, right: 48 };
  const height = pad.top + pad.bottom + Math.max(2, n) * 24;
  const tmax = Math.max(HLZ_T_HURDLE + 0.5, ...c.map((f) => Math.abs(f.tB)));
  const x = niceTicks(0, tmax, Math.max(3, Math.floor((w - left - 48) / 56)));
  const style = { ...axisStyle, tickLabels: { ...axisStyle.tickLabels, fontSize: font } };
  return (
    <View style={{ gap: space.xs }}>
      <View
        ref={ref}
        role="img"
        aria-label={`|t| of each candidate's b with the reference line at t = ${HLZ_T_HURDLE.toFixed(1)}: ${c.map((f) => `${f.name} ${Math.abs(f.tB).toFixed(2)}`).join(', ')}`}
        onLayout={(e) => setW(Math.floor(e.nativeEvent.layout.width))}
      >
        {w > 0 && n > 0 ? (
          <VictoryChart horizontal width={w} height={height} padding={pad} domain={{ x: [-0.6, n - 0.4], y: x.domain }}>
            <VictoryAxis crossAxis={false} orientation="left" offsetX={pad.left} tickValues={c.map((_, i) => n - 1 - i)} tickFormat={(t: number) => names[n - 1 - Math.round(t)] ?? ''} style={{ ...style, grid: { stroke: 'none' } }} />
            <VictoryAxis dependentAxis crossAxis={false} orientation="bottom" offsetY={pad.bottom} tickValues={x.ticks} tickFormat={(t: number) => formatTick(t, x.step)} style={style} />
            <VictoryBar
              data={c.map((f, i) => ({ x: n - 1 - i, y: Math.abs(f.tB) }))}
              barWidth={12}
              labels={({ datum }: { datum: { y: number } }) => datum.y.toFixed(2)}
              style={{ data: { fill: colors.slate }, labels: { fontFamily: fonts.mono, fontSize: font, fill: colors.ink } }}
            />
            <VictoryLine
              data={[
                { x: -0.6, y: HLZ_T_HURDLE },
                { x: n - 0.4, y: HLZ_T_HURDLE },
              ]}
              style={{ data: { stroke: colors.brass, strokeDasharray: '5,4', strokeWidth: 1.5 } }}
            />
          </VictoryChart>
        ) : null}
      </View>
      <Text style={text.muted}>
        The dashed line at |t| = {HLZ_T_HURDLE.toFixed(1)} is the hurdle Harvey, Liu and Zhu (2016) propose for a new factor, given how many factors have already been tried in
        the literature. It is a reference, not a rule: the verdicts use your level, and the adjusted p-values above are the correction for the tests run here. ◆ |t| at or above the line.
      </Text>
      <ChartDownload
        target={ref}
        fileName="subset-sweep-candidate-t"
        title="|t| of each candidate's b in the full model"
        legend={[
          { label: '|t| of b', stroke: colors.slate, width: 10 },
          { label: `reference |t| = ${HLZ_T_HURDLE.toFixed(1)} (Harvey, Liu and Zhu 2016)`, stroke: colors.brass, dash: '5,4' },
        ]}
        note={`${result.K} candidates, ${result.N} test assets, T = ${result.T}. A reference line, not a rule.`}
      />
    </View>
  );
}

/** Subsets of the traded candidates ranked by the squared Sharpe ratio of their factors, with SEs; ◆ within one SE of the best. */
function ThetaRanking({ result }: { result: SubsetSweepJobResult }) {
  const r = result.thetaRanking;
  const row = (m: { factors: readonly string[]; theta: number; se: number; withinOneSe: boolean }, prefix = '') => ({
    key: `${prefix}${m.factors.join('+')}`,
    label: m.factors.join(' + '),
    name: m.factors.join(' + '),
    cells: [{ value: m.theta, decimals: 4, marked: m.withinOneSe, marker: '◆' }, { value: m.se, decimals: 4 }, String(m.factors.length)],
  });
  return (
    <View style={{ gap: space.xs }}>
      <Text style={text.strong}>Ranking by squared Sharpe ratio (traded candidates)</Text>
      {!r ? (
        <Text style={text.muted}>{result.thetaNote ?? 'No ranking.'}</Text>
      ) : (
        <>
          <Text style={text.muted}>
            {r.models} subsets of {r.candidates.join(', ')} ranked by θ̂ = μ′Σ⁻¹μ of their factors (per period). Best: {r.best.factors.join(' + ')}, θ̂ {formatNum(r.best.theta, 4)} (se {formatNum(r.best.se, 4)}); {r.withinOneSe} subsets lie within one standard error of it (◆).
          </Text>
          <Grid label="Top subsets by squared Sharpe ratio" head={['factors', 'θ̂', 'se', 'K']} rows={r.top.slice(0, 10).map((m) => row(m, 'top-'))} />
          {r.smallestWithinOneSe.length ? (
            <>
              <Text style={text.strong}>Smallest subsets within one SE of the best</Text>
              <Grid label="Smallest subsets within one SE" head={['factors', 'θ̂', 'se', 'K']} rows={r.smallestWithinOneSe.map((m) => row(m, 'small-'))} />
            </>
          ) : null}
          <Text style={text.muted}>Adding a factor never lowers θ̂; a smaller subset within one SE of the best does about as well with fewer factors (Barillas and Shanken 2017).</Text>
        </>
      )}
    </View>
  );
}

/** Share of the best models (per size) that hold each factor, as horizontal bars with their percent. */
function FrequencyChart({ result }: { result: SubsetSweepJobResult }) {
  const [w, setW] = useState(0);
  const ref = useRef<View>(null);
  const sorted = [...result.factorFrequency].sort((a, b) => b.share - a.share);
  const n = sorted.length;
  const font = 11;
  const maxName = Math.max(4, Math.floor((w * 0.4) / (font * 0.6)));
  const names = sorted.map((f) => (f.name.length > maxName ? `${f.name.slice(0, maxName - 1)}…` : f.name));
  const left = Math.min(Math.ceil(w * 0.4), Math.max(...names.map((x) => monoWidth(x, font)))) + 12;
  const pad = { top: 8, bottom: 28, left, right: 44 };
  const height = pad.top + pad.bottom + Math.max(2, n) * 24;
  const style = { ...axisStyle, tickLabels: { ...axisStyle.tickLabels, fontSize: font } };
  return (
    <View style={{ gap: space.xs }}>
      <View
        ref={ref}
        role="img"
        aria-label={`Factor frequency: ${sorted.map((f) => `${f.name} ${Math.round(f.share * 100)}%`).join(', ')}`}
        onLayout={(e) => setW(Math.floor(e.nativeEvent.layout.width))}
      >
        {w > 0 && n > 0 ? (
          <VictoryChart horizontal width={w} height={height} padding={pad} domain={{ x: [-0.6, n - 0.4], y: [0, 100] }}>
            <VictoryAxis crossAxis={false} orientation="left" offsetX={pad.left} tickValues={sorted.map((_, i) => n - 1 - i)} tickFormat={(t: number) => names[n - 1 - Math.round(t)] ?? ''} style={{ ...style, grid: { stroke: 'none' } }} />
            <VictoryAxis dependentAxis crossAxis={false} orientation="bottom" offsetY={pad.bottom} tickValues={[0, 25, 50, 75, 100]} tickFormat={(t: number) => `${t}%`} style={style} />
            <VictoryBar
              data={sorted.map((f, i) => ({ x: n - 1 - i, y: f.share * 100 }))}
              barWidth={12}
              labels={({ datum }: { datum: { y: number } }) => `${Math.round(datum.y)}%`}
              style={{ data: { fill: colors.slate }, labels: { fontFamily: fonts.mono, fontSize: font, fill: colors.ink } }}
            />
          </VictoryChart>
        ) : null}
      </View>
      <ChartDownload target={ref} fileName="subset-sweep-factor-frequency" title="How often each factor is among the best models" note={`${result.models} models on ${result.N} test assets, T = ${result.T}.`} />
    </View>
  );
}

const AXIS_FONT = 10;
const axisStyle = {
  axis: { stroke: colors.rule },
  tickLabels: { fill: colors.slate, fontSize: AXIS_FONT, fontFamily: fonts.mono, padding: 4 },
  grid: { stroke: colors.rule, strokeDasharray: '2,4' },
};
const ROLL_PAD = { top: 10, bottom: 30, left: 52, right: 14 };
const ROLL_H = 200;

function FactorWindowChart({ result, k, what }: { result: RollingJobResult; k: number; what: 'b' | 'lambda' }) {
  const [w, setW] = useState(320);
  const ref = useRef<View>(null);
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
  const plotW = w - ROLL_PAD.left - ROLL_PAD.right;
  const plotH = ROLL_H - ROLL_PAD.top - ROLL_PAD.bottom;
  const widest = Math.max(0, ...data.map((d) => monoWidth(d.label, AXIS_FONT)));
  const ticks = labelIndices(data.length, plotW, widest);
  // The band, the estimate and 0 all inside nice ticks; labels with the decimals the step needs.
  const finite = data.flatMap((d) => [d.lo, d.hi, d.y]).filter((v) => Number.isFinite(v));
  const y = niceTicks(Math.min(...finite, 0), Math.max(...finite, 0), Math.max(3, Math.floor(plotH / 30)), true);
  const legend = [
    { label: `${what === 'b' ? 'b' : 'λ'} estimate`, stroke: colors.ink },
    { label: `±${result.z.toFixed(2)} standard errors`, stroke: colors.brassTint, width: 10 },
    { label: 'zero', stroke: colors.fog, dash: '4,4' },
  ];
  return (
    <View style={{ flexGrow: 1, flexBasis: 320, minWidth: 0, gap: space.xs }} onLayout={onLayout}>
      <Text style={text.strong}>{title}</Text>
      {data.length === 0 ? (
        <Text style={text.muted}>No window could be estimated.</Text>
      ) : (
        <>
          <View ref={ref} role="img" aria-label={`${title}, by window`}>
            <VictoryChart width={w} height={ROLL_H} padding={ROLL_PAD} domain={{ x: [0, Math.max(1, data.length - 1)], y: y.domain }}>
              <VictoryArea data={data.map((d) => ({ x: d.x, y: d.hi, y0: d.lo }))} style={{ data: { fill: colors.brassTint, stroke: 'none' } }} />
              <VictoryLine data={[{ x: 0, y: 0 }, { x: Math.max(1, data.length - 1), y: 0 }]} style={{ data: { stroke: colors.fog, strokeDasharray: '4,4', strokeWidth: 1 } }} />
              <VictoryLine data={data.map((d) => ({ x: d.x, y: d.y }))} style={{ data: { stroke: colors.ink, strokeWidth: 1.5 } }} />
              <VictoryAxis
                crossAxis={false}
                orientation="bottom"
                offsetY={ROLL_PAD.bottom}
                style={{ ...axisStyle, tickLabels: { ...axisStyle.tickLabels, padding: 6, textAnchor: edgeAnchor(data.length) } }}
                tickValues={ticks}
                tickFormat={(t: number) => data[t]?.label ?? ''}
              />
              <VictoryAxis dependentAxis crossAxis={false} orientation="left" offsetX={ROLL_PAD.left} style={axisStyle} tickValues={y.ticks} tickFormat={(t: number) => formatTick(t, y.step)} />
            </VictoryChart>
          </View>
          <ChartDownload
            target={ref}
            fileName={`rolling-${what}-${name}`}
            title={`${title}, ${result.kind} windows of ${result.length}`}
            legend={legend}
            note="x: last period of each window. Statistical evidence, not investment advice."
          />
        </>
      )}
    </View>
  );
}

export function RollingResultView({ result }: { result: RollingJobResult }) {
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
            .flatMap((p) => (p.ok ? [] : [`${p.startDate ?? p.start}–${p.endDate ?? p.end} (${gmmFailureMessage(p)})`]))
            .slice(0, 5)
            .join('; ')}
        </Text>
      ) : null}
    </View>
  );
}

const pct = (x: number | null | undefined) => (x === null || x === undefined ? '—' : `${formatNum(x * 100, 3)}`);

/** The hold-out check: one split (α₂ per asset), or the rolling version charted per block. */
export function HoldoutResultView({ result }: { result: HoldoutJobResult }) {
  if (result.mode === 'split') {
    const r = result;
    return (
      <View style={{ gap: space.md }} aria-label="Hold-out result">
        <Text style={text.muted}>
          b estimated with the run’s settings on the first {r.T1} periods; the {r.T2} periods from {r.splitDate ?? `period ${r.split + 1}`} on are priced with it (HAC lag {r.lags}, {r.form} SDF).
        </Text>
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
          <Text style={text.strong}>R²_oos {formatNum(r.r2oos, 3)}</Text>
          <Text style={text.body}>in sample {formatNum(r.r2in, 3)}</Text>
          <Text style={text.body}>mean |α₂| {pct(r.meanAbsAlpha)} % per period</Text>
        </View>
        <Grid
          label="Hold-out pricing errors"
          head={['asset', 'mean %', 'model %', 'α₂ %']}
          rows={r.assetNames.map((a, i) => ({
            key: a,
            label: a,
            name: a,
            cells: [{ value: r.holdoutMean[i] * 100, decimals: 3 }, { value: r.predicted[i] * 100, decimals: 3 }, { value: r.alpha[i] * 100, decimals: 3 }],
          }))}
        />
        <Text style={text.muted}>
          mean: the hold-out mean excess return m₂; model: C₂b̂, the mean the model predicts with the hold-out covariances; α₂ = m₂ − C₂b̂. R²_oos = 1 − α₂′α₂ / m₂′m₂: 1 is a perfect
          price, 0 no better than predicting zero for every asset, below 0 worse (Kozak, Nagel and Santosh 2020).{r.note ? ` ${r.note}` : ''}
        </Text>
        <Caution>A hold-out check is evidence about the model on periods it was not fitted to, not investment advice.</Caution>
      </View>
    );
  }
  const r = result;
  const ok = r.rows.filter((x) => x.ok);
  return (
    <View style={{ gap: space.md }} aria-label="Rolling hold-out result">
      <Text style={text.muted}>
        {r.rows.length} blocks: b re-estimated on each window of {r.length} periods, then the next {r.step} periods priced with it (HAC lag {r.lags}). Pooled R²_oos{' '}
        {formatNum(r.pooledR2oos, 3)}; mean |α₂| over the blocks {pct(r.meanAbsAlpha)} % per period.
        {r.rows.length > ok.length ? ` ${r.rows.length - ok.length} block(s) could not be estimated.` : ''}
      </Text>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
        <BlockChart result={r} what="r2" />
        <BlockChart result={r} what="alpha" />
      </View>
      <Text style={text.muted}>x: first period of each priced block. R²_oos can fall below 0 when the model prices a block worse than predicting zero. {r.note ?? ''}</Text>
      <Caution>A hold-out check is evidence about the model on periods it was not fitted to, not investment advice.</Caution>
    </View>
  );
}

function BlockChart({ result, what }: { result: Extract<HoldoutJobResult, { mode: 'rolling' }>; what: 'r2' | 'alpha' }) {
  const [w, setW] = useState(320);
  const ref = useRef<View>(null);
  const onLayout = (e: LayoutChangeEvent) => setW(Math.max(240, Math.floor(e.nativeEvent.layout.width)));
  const rows = result.rows.filter((x) => x.ok);
  const data = rows.map((x, i) => ({ x: i, y: what === 'r2' ? x.r2oos! : x.meanAbsAlpha! * 100, label: x.blockStartDate ?? String(x.end + 1) }));
  const title = what === 'r2' ? 'R²_oos per block' : 'mean |α₂| per block (% per period)';
  const plotW = w - ROLL_PAD.left - ROLL_PAD.right;
  const plotH = ROLL_H - ROLL_PAD.top - ROLL_PAD.bottom;
  const widest = Math.max(0, ...data.map((d) => monoWidth(d.label, AXIS_FONT)));
  const ticks = labelIndices(data.length, plotW, widest);
  const ys = data.map((d) => d.y).filter((v) => Number.isFinite(v));
  const y = niceTicks(Math.min(...ys, 0), Math.max(...ys, what === 'r2' ? 1 : 0), Math.max(3, Math.floor(plotH / 30)), true);
  const last = Math.max(1, data.length - 1);
  return (
    <View style={{ flexGrow: 1, flexBasis: 320, minWidth: 0, gap: space.xs }} onLayout={onLayout}>
      <Text style={text.strong}>{title}</Text>
      {data.length === 0 ? (
        <Text style={text.muted}>No block could be estimated.</Text>
      ) : (
        <>
          <View ref={ref} role="img" aria-label={`${title}: ${data.map((d) => `${d.label} ${d.y.toFixed(3)}`).join(', ')}`}>
            <VictoryChart width={w} height={ROLL_H} padding={ROLL_PAD} domain={{ x: [0, last], y: y.domain }}>
              <VictoryLine data={[{ x: 0, y: 0 }, { x: last, y: 0 }]} style={{ data: { stroke: colors.fog, strokeDasharray: '4,4', strokeWidth: 1 } }} />
              <VictoryLine data={data.map((d) => ({ x: d.x, y: d.y }))} style={{ data: { stroke: colors.ink, strokeWidth: 1.5 } }} />
              <VictoryAxis
                crossAxis={false}
                orientation="bottom"
                offsetY={ROLL_PAD.bottom}
                style={{ ...axisStyle, tickLabels: { ...axisStyle.tickLabels, padding: 6, textAnchor: edgeAnchor(data.length) } }}
                tickValues={ticks}
                tickFormat={(t: number) => data[t]?.label ?? ''}
              />
              <VictoryAxis dependentAxis crossAxis={false} orientation="left" offsetX={ROLL_PAD.left} style={axisStyle} tickValues={y.ticks} tickFormat={(t: number) => formatTick(t, y.step)} />
            </VictoryChart>
          </View>
          <ChartDownload
            target={ref}
            fileName={`holdout-${what}`}
            title={`${title}, windows of ${result.length}, blocks of ${result.step}`}
            legend={[
              { label: what === 'r2' ? 'R²_oos' : 'mean |α₂|', stroke: colors.ink },
              { label: 'zero', stroke: colors.fog, dash: '4,4' },
            ]}
            note="x: first period of each priced block. Statistical evidence, not investment advice."
          />
        </>
      )}
    </View>
  );
}

/** The result view for a finished job of any kind. */
export function DeepCheckResult({ job }: { job: Job }) {
  if (!job.result) return null;
  if (job.kind === 'bootstrap') return <BootstrapResultView result={job.result} />;
  if (job.kind === 'subset-sweep') return <SweepResultView result={job.result} />;
  if (job.kind === 'holdout') return <HoldoutResultView result={job.result} />;
  return <RollingResultView result={job.result} />;
}
