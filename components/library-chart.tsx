import { useMemo, useState } from 'react';
import { StyleSheet, Text, View } from 'react-native';
import { VictoryAxis, VictoryChart, VictoryLine } from 'victory';
import { colors, fonts, space, text } from './theme';

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
export function LibraryChart({ dates, series, label }: { dates: readonly string[]; series: readonly ChartSeries[]; label: string }) {
  const [w, setW] = useState(0);
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
  const ticks = w < 500 ? 3 : 4;
  const tickIdx = Array.from({ length: ticks }, (_, i) => Math.round((i * (dates.length - 1)) / (ticks - 1)));
  const axisStyle = {
    axis: { stroke: colors.rule },
    tickLabels: { fontFamily: fonts.mono, fontSize: 11, fill: colors.slate, padding: 4 },
    grid: { stroke: colors.rule, strokeDasharray: '2,4' },
  };
  const logTicks: number[] = [];
  if (log) for (let p = Math.floor(Math.log10(lo)); p <= Math.ceil(Math.log10(hi)); p++) logTicks.push(Number((10 ** p).toPrecision(1)));
  return (
    <View
      role="img"
      aria-label={`${label}: ${data.map((d) => `${d.name} ${pct(d.last)}`).join(', ')}`}
      onLayout={(e) => setW(Math.round(e.nativeEvent.layout.width))}
      style={{ gap: space.sm }}
    >
      {w > 0 ? (
        <VictoryChart
          width={w}
          height={w < 500 ? 240 : 280}
          scale={{ x: 'linear', y: log ? 'log' : 'linear' }}
          padding={{ top: 12, bottom: 36, left: 60, right: 44 }}
          {...(log ? { domain: { y: [logTicks[0]!, logTicks[logTicks.length - 1]!] as [number, number] } } : { domainPadding: { y: 6 } })}
        >
          <VictoryAxis tickValues={tickIdx} tickFormat={(t: number) => dates[Math.round(t)] ?? ''} style={axisStyle} />
          <VictoryAxis
            dependentAxis
            {...(log ? { tickValues: logTicks } : {})}
            tickFormat={(y: number) => (log ? `${y >= 1 ? y.toLocaleString('en') : y}\u00D7` : `${Math.round((y - 1) * 100)}%`)}
            style={axisStyle}
          />
          {data.map((d, i) => (
            <VictoryLine key={d.name} data={d.pts} style={{ data: { stroke: LINES[i]!.stroke, strokeWidth: 1.6, strokeDasharray: LINES[i]!.dash } }} />
          ))}
        </VictoryChart>
      ) : null}
      <Text style={text.muted}>{log ? 'Growth of 1 on a log scale; labels give the cumulative return.' : 'Cumulative return in percent.'}</Text>
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
