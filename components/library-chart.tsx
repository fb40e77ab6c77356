import { useMemo, useRef, useState } from 'react';
import { StyleSheet, Text, View } from 'react-native';
import { VictoryAxis, VictoryChart, VictoryLine } from 'victory';
import { ChartDownload } from './chart-download';
import { formatNum } from './num';
import { colors, fonts, space, text } from './theme';

// ───────────── axis helpers (shared by every Keelson chart drawn with victory) ─────────────

/**
 * "Nice" ticks for [lo, hi]: steps of 1, 2 or 5 × 10^k, at most `maxTicks` of them, covering the
 * range (and 0 when `includeZero`). Returns the ticks, their step and the domain they span.
 */
export function niceTicks(lo: number, hi: number, maxTicks = 5, includeZero = false): { ticks: number[]; step: number; domain: [number, number] } {
  let a = Number.isFinite(lo) ? lo : 0;
  let b = Number.isFinite(hi) ? hi : 1;
  if (includeZero) {
    a = Math.min(a, 0);
    b = Math.max(b, 0);
  }
  if (b < a) [a, b] = [b, a];
  if (b - a < 1e-12 * Math.max(1, Math.abs(a), Math.abs(b))) {
    const d = a === 0 ? 1 : Math.abs(a) * 0.1;
    a -= d;
    b += d;
  }
  const n = Math.max(2, Math.floor(maxTicks));
  let step = 0;
  let start = 0;
  let end = 0;
  const base = 10 ** Math.floor(Math.log10((b - a) / (n - 1)));
  for (const m of [1, 2, 5, 10, 20, 50]) {
    step = m * base;
    start = Math.floor(a / step + 1e-9) * step;
    end = Math.ceil(b / step - 1e-9) * step;
    if (Math.round((end - start) / step) + 1 <= n) break;
  }
  const count = Math.round((end - start) / step) + 1;
  const ticks = Array.from({ length: count }, (_, i) => {
    const v = start + i * step;
    return Math.abs(v) < step * 1e-9 ? 0 : Number(v.toPrecision(12));
  });
  return { ticks, step, domain: [ticks[0]!, ticks[ticks.length - 1]!] };
}

/** Decimals that tell ticks `step` apart and no more: step 5 → 0, 0.5 → 1, 0.02 → 2. */
export function tickDecimals(step: number): number {
  if (!(step > 0)) return 0;
  return Math.max(0, Math.min(8, -Math.floor(Math.log10(step) + 1e-9)));
}

/** A tick label with the decimals its axis step needs, a true minus and a plain "0". */
export function formatTick(v: number, step: number): string {
  return Math.abs(v) < step * 1e-9 ? '0' : formatNum(v, tickDecimals(step));
}

/**
 * Indices of `n` evenly spaced points (0 … n−1 across `plotWidth` px) to label with labels about
 * `labelPx` wide: the first label starts at its point, the last ends at its point, the others are
 * centred (see `edgeAnchor`); labels are kept left to right at a common step whenever they leave
 * `gap` px to the previous one, and the last point is labelled too (dropping the one before it if
 * they would touch).
 */
export function labelIndices(n: number, plotWidth: number, labelPx: number, gap = 16): number[] {
  if (n <= 0) return [];
  if (n === 1) return [0];
  const per = plotWidth / (n - 1);
  const span = (i: number): [number, number] => {
    const x = i * per;
    return i === 0 ? [x, x + labelPx] : i === n - 1 ? [x - labelPx, x] : [x - labelPx / 2, x + labelPx / 2];
  };
  const step = Math.max(1, Math.ceil((labelPx + gap) / per));
  const out: number[] = [0];
  for (let i = step; i < n - 1; i += step) if (span(i)[0] >= span(out[out.length - 1]!)[1] + gap) out.push(i);
  while (out.length > 1 && span(n - 1)[0] < span(out[out.length - 1]!)[1] + gap) out.pop();
  if (span(n - 1)[0] >= span(out[out.length - 1]!)[1] + gap) out.push(n - 1);
  return out;
}

/** Width of a monospace label at `fontSize` (IBM Plex Mono advances 0.6 em per character). */
export function monoWidth(label: string, fontSize: number): number {
  return Math.ceil(label.length * fontSize * 0.6);
}

/** Text anchors for the labels of points 0 … n−1: the first starts at its point, the last ends at it (none hangs past the plot or onto the y labels). */
export function edgeAnchor(n: number) {
  return (props: { tick?: unknown }): 'start' | 'middle' | 'end' => {
    const t = Number(props.tick);
    return t === 0 ? 'start' : t === n - 1 ? 'end' : 'middle';
  };
}

export interface ChartSeries {
  name: string;
  values: readonly (number | null)[];
}

/** Up to six lines; each has its own colour, dash pattern and legend glyph, so colour is never the only cue. */
const LINES = [
  { stroke: colors.ink, dash: undefined, glyph: '\u25A0', sample: '\u2014\u2014' },
  { stroke: colors.brass, dash: '6,3', glyph: '\u25C6', sample: '\u2013 \u2013' },
  { stroke: colors.kelp, dash: '2,3', glyph: '\u25B2', sample: '\u00B7\u00B7\u00B7' },
  { stroke: colors.rust, dash: '8,3,2,3', glyph: '\u25CF', sample: '\u2013\u00B7\u2013' },
  { stroke: colors.slate, dash: '1,4', glyph: '\u2605', sample: '. . .' },
  { stroke: colors.fog, dash: '10,4', glyph: '\u271A', sample: '\u2014 \u2014' },
] as const;

const MAX_POINTS = 600;

/** Growth of one unit, Π(1 + r_t), from decimals; a missing value counts as no change that period. */
export function growthOfOne(values: readonly (number | null)[]): number[] {
  const out = new Array<number>(values.length);
  let level = 1;
  for (let t = 0; t < values.length; t++) {
    const r = values[t];
    if (r !== null && r !== undefined && Number.isFinite(r)) level *= 1 + r;
    out[t] = level;
  }
  return out;
}

function pct(level: number): string {
  const p = (level - 1) * 100;
  const s = Math.abs(p) >= 1000 ? Math.round(Math.abs(p)).toLocaleString('en') : Math.abs(p).toFixed(1);
  return `${p >= 0 ? '+' : '\u2212'}${s}%`;
}

/**
 * Cumulative return of the chosen series. Small ranges are drawn as cumulative percent on a linear
 * axis; when growth spans more than a factor of four the axis switches to growth of 1 on a log scale.
 * Long daily series are thinned to about 600 points for drawing.
 */
export function LibraryChart({
  dates,
  series,
  label,
  title,
  fileName,
}: {
  dates: readonly string[];
  series: readonly ChartSeries[];
  /** Accessible name of the chart (the values are appended). */
  label: string;
  /** Title of a downloaded file (default: label). */
  title?: string;
  fileName?: string;
}) {
  const [w, setW] = useState(0);
  const ref = useRef<View>(null);
  const data = useMemo(() => {
    const step = Math.max(1, Math.ceil(dates.length / MAX_POINTS));
    return series.slice(0, LINES.length).map((s) => {
      const g = growthOfOne(s.values);
      const pts: { x: number; y: number }[] = [];
      for (let t = 0; t < g.length; t += step) pts.push({ x: t, y: g[t]! });
      if ((g.length - 1) % step !== 0) pts.push({ x: g.length - 1, y: g[g.length - 1]! });
      return { name: s.name, pts, last: g[g.length - 1] ?? 1 };
    });
  }, [dates, series]);
  const { lo, hi } = useMemo(() => {
    let lo = Infinity;
    let hi = -Infinity;
    for (const d of data) for (const p of d.pts) {
      if (p.y < lo) lo = p.y;
      if (p.y > hi) hi = p.y;
    }
    return { lo, hi };
  }, [data]);
  if (series.length === 0 || dates.length < 2) return <Text style={text.muted}>Choose at least one series to draw.</Text>;
  const log = lo > 0 && hi / lo > 4;
  const phone = w < 500;
  const height = phone ? 240 : 280;
  const pad = { top: 12, bottom: 34, left: 56, right: 16 };
  const fontSize = 11;
  const plotW = Math.max(80, w - pad.left - pad.right);
  const plotH = height - pad.top - pad.bottom;
  const dateIdx = labelIndices(dates.length, plotW, monoWidth(dates[0] ?? '2000-01', fontSize));
  const axisStyle = {
    axis: { stroke: colors.rule },
    tickLabels: { fontFamily: fonts.mono, fontSize, fill: colors.slate, padding: 4 },
    grid: { stroke: colors.rule, strokeDasharray: '2,4' },
  };
  // y ticks: log → 1-2-5 multiples of growth of 1 inside the range; linear → nice cumulative percents (0% always shown).
  let yTicks: number[];
  let yDomain: [number, number];
  let yLabel: (y: number) => string;
  if (log) {
    const all: number[] = [];
    for (let p = Math.floor(Math.log10(lo)) - 1; p <= Math.ceil(Math.log10(hi)); p++) for (const m of [1, 2, 5]) all.push(Number((m * 10 ** p).toPrecision(3)));
    const decades = all.filter((v, i) => i % 3 === 0 && v >= lo / 1.0001 && v <= hi * 1.0001);
    const inside = all.filter((v) => v >= lo / 1.0001 && v <= hi * 1.0001);
    const maxTicks = Math.max(3, Math.floor(plotH / 32));
    yDomain = [lo, hi];
    if (inside.length < 3) {
      // A short range: widen the domain to the 1-2-5 values just outside it, so at least two ticks show.
      const below = all.filter((v) => v <= lo).pop() ?? lo;
      const above = all.find((v) => v >= hi) ?? hi;
      yDomain = [below, above];
      yTicks = all.filter((v) => v >= below && v <= above);
    } else yTicks = decades.length >= 3 || inside.length > maxTicks ? (decades.length >= 2 ? decades : inside.filter((_, i) => i % 2 === 0)) : inside;
    yLabel = (y) => `${y >= 1 ? y.toLocaleString('en') : y}\u00D7`;
  } else {
    const t = niceTicks((lo - 1) * 100, (hi - 1) * 100, Math.max(3, Math.floor(plotH / 32)), true);
    yTicks = t.ticks.map((p) => 1 + p / 100);
    yDomain = [1 + t.domain[0] / 100, 1 + t.domain[1] / 100];
    yLabel = (y) => `${formatTick((y - 1) * 100, t.step)}%`;
  }
  const legend = data.map((d, i) => ({ label: `${d.name} ${pct(d.last)}`, stroke: LINES[i]!.stroke, dash: LINES[i]!.dash }));
  const note = log ? 'Growth of 1 on a log scale; labels give the cumulative return.' : 'Cumulative return in percent.';
  return (
    <View style={{ gap: space.sm }}>
      <View
        ref={ref}
        role="img"
        aria-label={`${label}: ${data.map((d) => `${d.name} ${pct(d.last)}`).join(', ')}`}
        onLayout={(e) => setW(Math.round(e.nativeEvent.layout.width))}
      >
        {w > 0 ? (
          <VictoryChart width={w} height={height} scale={{ x: 'linear', y: log ? 'log' : 'linear' }} padding={pad} domain={{ x: [0, dates.length - 1], y: yDomain }}>
            <VictoryAxis
              crossAxis={false}
              orientation="bottom"
              offsetY={pad.bottom}
              tickValues={dateIdx}
              tickFormat={(t: number) => dates[Math.round(t)] ?? ''}
              style={{ ...axisStyle, tickLabels: { ...axisStyle.tickLabels, padding: 6, textAnchor: edgeAnchor(dates.length) } }}
            />
            <VictoryAxis dependentAxis crossAxis={false} orientation="left" offsetX={pad.left} tickValues={yTicks} tickFormat={yLabel} style={axisStyle} />
            {data.map((d, i) => (
              <VictoryLine key={d.name} data={d.pts} style={{ data: { stroke: LINES[i]!.stroke, strokeWidth: 1.6, strokeDasharray: LINES[i]!.dash } }} />
            ))}
          </VictoryChart>
        ) : null}
      </View>
      <Text style={text.muted}>{note}</Text>
      <View style={styles.legend}>
        {data.map((d, i) => (
          <View key={d.name} style={styles.item}>
            <Text style={[styles.glyph, { color: LINES[i]!.stroke }]}>
              {LINES[i]!.glyph} {LINES[i]!.sample}
            </Text>
            <Text style={styles.name}>{d.name}</Text>
            <Text style={styles.num}>{pct(d.last)}</Text>
          </View>
        ))}
      </View>
      <ChartDownload target={ref} fileName={fileName ?? title ?? label} title={title ?? label} legend={legend} note={note} />
    </View>
  );
}

const styles = StyleSheet.create({
  legend: { flexDirection: 'row', flexWrap: 'wrap', columnGap: space.lg, rowGap: space.xs },
  item: { flexDirection: 'row', alignItems: 'center', gap: space.xs },
  glyph: { fontFamily: fonts.mono, fontSize: 13 },
  name: { fontFamily: fonts.text, fontSize: 13, color: colors.ink },
  num: { fontFamily: fonts.mono, fontSize: 13, color: colors.slate, fontVariant: ['tabular-nums'] },
});
