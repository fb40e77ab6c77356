import { useMemo } from 'react';
import { Text, View, useWindowDimensions } from 'react-native';
import { VictoryAxis, VictoryChart, VictoryLegend, VictoryLine } from 'victory';
import { colors, fonts, space, text } from './theme';

export interface ChartSeries {
  name: string;
  values: readonly (number | null)[];
}

/** Line colours for up to six series; each line also gets its own dash so colour is not the only cue. */
const LINES = [
  { stroke: colors.ink, dash: undefined },
  { stroke: colors.brass, dash: '6,3' },
  { stroke: colors.kelp, dash: '2,3' },
  { stroke: colors.rust, dash: '8,3,2,3' },
  { stroke: colors.slate, dash: '1,4' },
  { stroke: colors.fog, dash: '10,4' },
] as const;

const MAX_POINTS = 600;

/**
 * Cumulative return of each series, Π(1 + r_t) − 1, from decimals; a missing value counts as no
 * change that period. Long daily series are thinned to about 600 points for drawing.
 */
export function cumulativeReturns(values: readonly (number | null)[]): number[] {
  const out = new Array<number>(values.length);
  let level = 1;
  for (let t = 0; t < values.length; t++) {
    const r = values[t];
    if (r !== null && r !== undefined && Number.isFinite(r)) level *= 1 + r;
    out[t] = level - 1;
  }
  return out;
}

export function LibraryChart({ dates, series, label }: { dates: readonly string[]; series: readonly ChartSeries[]; label: string }) {
  const { width } = useWindowDimensions();
  const w = Math.max(300, Math.min(width - 2 * space.xl - 280 * (width >= 900 ? 1 : 0), 900));
  const data = useMemo(() => {
    const step = Math.max(1, Math.ceil(dates.length / MAX_POINTS));
    return series.slice(0, LINES.length).map((s) => {
      const cum = cumulativeReturns(s.values);
      const pts: { x: number; y: number }[] = [];
      for (let t = 0; t < cum.length; t += step) pts.push({ x: t, y: cum[t]! });
      if ((cum.length - 1) % step !== 0) pts.push({ x: cum.length - 1, y: cum[cum.length - 1]! });
      return { name: s.name, pts, last: cum[cum.length - 1] ?? 0 };
    });
  }, [dates, series]);
  if (series.length === 0 || dates.length < 2) return <Text style={text.muted}>Choose at least one series to draw.</Text>;
  const tickIdx = [0, Math.floor(dates.length / 3), Math.floor((2 * dates.length) / 3), dates.length - 1];
  const axisStyle = {
    axis: { stroke: colors.rule },
    tickLabels: { fontFamily: fonts.mono, fontSize: 11, fill: colors.slate, padding: 4 },
    grid: { stroke: colors.rule, strokeDasharray: '2,4' },
  };
  return (
    <View role="img" aria-label={`${label}: ${data.map((d) => `${d.name} ${(d.last * 100).toFixed(1)}%`).join(', ')}`}>
      <VictoryChart width={w} height={280} padding={{ top: 16, bottom: 40, left: 56, right: 16 }} domainPadding={{ y: 8 }}>
        <VictoryAxis tickValues={tickIdx} tickFormat={(t: number) => dates[Math.round(t)] ?? ''} style={axisStyle} />
        <VictoryAxis dependentAxis tickFormat={(y: number) => `${Math.round(y * 100)}%`} style={axisStyle} />
        {data.map((d, i) => (
          <VictoryLine
            key={d.name}
            data={d.pts}
            style={{ data: { stroke: LINES[i]!.stroke, strokeWidth: 1.6, strokeDasharray: LINES[i]!.dash } }}
          />
        ))}
      </VictoryChart>
      <VictoryLegend
        width={w}
        height={24 + 22 * Math.ceil(data.length / 3)}
        orientation="horizontal"
        itemsPerRow={3}
        gutter={18}
        style={{ labels: { fontFamily: fonts.text, fontSize: 12, fill: colors.ink } }}
        data={data.map((d, i) => ({
          name: `${d.name} ${d.last >= 0 ? '+' : '\u2212'}${Math.abs(d.last * 100).toFixed(1)}%`,
          symbol: { fill: LINES[i]!.stroke, type: ['square', 'diamond', 'triangleUp', 'circle', 'star', 'minus'][i] },
        }))}
      />
    </View>
  );
}
