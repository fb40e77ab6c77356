/**
 * Charts of a run (victory, web SVG): predicted vs realised mean excess returns with a 45° line
 * and error bars; b and λ per factor with confidence intervals; pricing errors per asset.
 * Values in % per period (λ, returns, α); b in its own units.
 */
import { useRef, useState } from 'react';
import { Text, View, type LayoutChangeEvent } from 'react-native';
import { VictoryAxis, VictoryBar, VictoryChart, VictoryErrorBar, VictoryLine, VictoryScatter } from 'victory';
import type { LedgerResult } from '../shared/runs';
import { ChartDownload } from './chart-download';
import { colors, space, text } from './theme';

/** The two-sided critical value the engine used, read back from a factor's interval (b ± z·se). */
export function criticalZ(result: LedgerResult): number {
  const f = result.factors.find((x) => x.seB > 0);
  return f ? (f.ciB[1] - f.b) / f.seB : 1.96;
}

const axisStyle = {
  axis: { stroke: colors.rule },
  tickLabels: { fill: colors.slate, fontSize: 10, fontFamily: 'IBMPlexMono_400Regular' },
  grid: { stroke: colors.rule, strokeDasharray: '2,4' },
  axisLabel: { fill: colors.slate, fontSize: 11, padding: 30, fontFamily: 'Inter_400Regular' },
};

/** Tick labels with at most three significant digits, no trailing zeros. */
const tick = (t: number) => String(Number(t.toPrecision(3)));

function useWidth(initial = 320): [number, (e: LayoutChangeEvent) => void] {
  const [w, setW] = useState(initial);
  return [w, (e) => setW(Math.max(240, Math.floor(e.nativeEvent.layout.width)))];
}

/** A chart with its title, caption and SVG / PNG download (the file carries the title and caption). */
function ChartBox({ title, caption, fileName, children, onLayout }: { title: string; caption: string; fileName: string; children: React.ReactNode; onLayout: (e: LayoutChangeEvent) => void }) {
  const ref = useRef<View>(null);
  return (
    <View style={{ flexGrow: 1, flexBasis: 320, minWidth: 0, gap: space.xs }}>
      <View style={{ gap: space.xs }} onLayout={onLayout} aria-label={title} role="img" ref={ref}>
        <Text style={text.strong}>{title}</Text>
        {children}
      </View>
      <Text style={text.muted}>{caption}</Text>
      <ChartDownload target={ref} fileName={fileName} title={title} note={caption} />
    </View>
  );
}

export function PredictedRealisedChart({ result, fileBase = 'keelson-run' }: { result: LedgerResult; fileBase?: string }) {
  const [w, onLayout] = useWidth();
  const z = criticalZ(result);
  const pts = result.pricingErrors.map((e) => ({ x: e.predicted * 100, y: e.meanReturn * 100, errorY: z * e.se * 100 }));
  const all = pts.flatMap((p) => [p.x, p.y - p.errorY, p.y + p.errorY]);
  const lo = Math.min(0, ...all);
  const hi = Math.max(...all);
  const pad = (hi - lo) * 0.05 || 0.1;
  const dom: [number, number] = [lo - pad, hi + pad];
  return (
    <ChartBox
      title="Predicted vs realised mean excess return, %"
      caption={`One dot per test asset; bars: ±${z.toFixed(2)} standard errors of the pricing error. On the 45° line the model prices the asset exactly.`}
      fileName={`${fileBase}-predicted-vs-realised`}
      onLayout={onLayout}
    >
      <VictoryChart width={w} height={Math.min(w, 340)} domain={{ x: dom, y: dom }} padding={{ top: 10, bottom: 44, left: 52, right: 12 }}>
        <VictoryAxis label="predicted" style={axisStyle} tickFormat={tick} />
        <VictoryAxis dependentAxis label="realised" style={axisStyle} tickFormat={tick} />
        <VictoryLine data={[{ x: dom[0], y: dom[0] }, { x: dom[1], y: dom[1] }]} style={{ data: { stroke: colors.fog, strokeDasharray: '4,4', strokeWidth: 1 } }} />
        <VictoryErrorBar data={pts} style={{ data: { stroke: colors.slate, strokeWidth: 1 } }} />
        <VictoryScatter data={pts} size={3.5} style={{ data: { fill: colors.ink } }} />
      </VictoryChart>
    </ChartBox>
  );
}

function CoefChart({ title, caption, fileName, items }: { title: string; caption: string; fileName: string; items: { x: string; y: number; lo: number; hi: number }[] }) {
  const [w, onLayout] = useWidth();
  const data = items.map((d, i) => ({ x: i + 1, y: d.y, errorY: [d.hi - d.y, d.y - d.lo] as [number, number] }));
  // Victory sizes the axis to the points only; widen it to the whole intervals (and 0) so no bar is cut off.
  const lo = Math.min(0, ...items.map((d) => d.lo));
  const hi = Math.max(0, ...items.map((d) => d.hi));
  const pad = (hi - lo) * 0.06 || 1;
  return (
    <ChartBox title={title} caption={caption} fileName={fileName} onLayout={onLayout}>
      <VictoryChart width={w} height={240} domain={{ x: [0.5, items.length + 0.5], y: [lo - pad, hi + pad] }} domainPadding={{ x: 24 }} padding={{ top: 10, bottom: 40, left: 56, right: 12 }}>
        <VictoryAxis tickValues={items.map((_, i) => i + 1)} tickFormat={(t: number) => items[t - 1]?.x ?? ''} style={axisStyle} offsetY={40} />
        <VictoryAxis dependentAxis crossAxis={false} style={axisStyle} tickFormat={tick} />
        <VictoryLine data={[{ x: 0.5, y: 0 }, { x: items.length + 0.5, y: 0 }]} style={{ data: { stroke: colors.fog, strokeWidth: 1 } }} />
        <VictoryErrorBar data={data} borderWidth={6} style={{ data: { stroke: colors.ink, strokeWidth: 1.5 } }} />
        <VictoryScatter data={data} size={4} symbol="square" style={{ data: { fill: colors.brass } }} />
      </VictoryChart>
    </ChartBox>
  );
}

export function CoefficientCharts({ result, fileBase = 'keelson-run' }: { result: LedgerResult; fileBase?: string }) {
  const pct = Math.round((1 - result.options.level) * 100);
  return (
    <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
      <CoefChart
        title="b per factor (needed?)"
        caption={`${pct}% intervals; an interval that excludes 0 means the factor is needed.`}
        fileName={`${fileBase}-b`}
        items={result.factors.map((f) => ({ x: f.name, y: f.b, lo: f.ciB[0], hi: f.ciB[1] }))}
      />
      <CoefChart
        title="λ per factor, % (priced?)"
        caption={`${pct}% intervals; an interval that excludes 0 means the factor is priced.`}
        fileName={`${fileBase}-lambda`}
        items={result.factors.map((f) => ({ x: f.name, y: f.lambda * 100, lo: f.ciLambda[0] * 100, hi: f.ciLambda[1] * 100 }))}
      />
    </View>
  );
}

export function PricingErrorChart({ result, fileBase = 'keelson-run' }: { result: LedgerResult; fileBase?: string }) {
  const [w, onLayout] = useWidth();
  const z = criticalZ(result);
  const data = result.pricingErrors.map((e, i) => ({ x: i + 1, y: e.alpha * 100, errorY: z * e.se * 100, asset: e.asset }));
  const h = Math.max(220, 16 * data.length + 50);
  return (
    <ChartBox
      title="Pricing error per test asset, %"
      caption={`α = realised − predicted mean excess return; bars ±${z.toFixed(2)} standard errors.`}
      fileName={`${fileBase}-pricing-errors`}
      onLayout={onLayout}
    >
      <VictoryChart horizontal width={w} height={h} domainPadding={{ x: 10 }} padding={{ top: 10, bottom: 36, left: 110, right: 16 }}>
        <VictoryAxis tickValues={data.map((d) => d.x)} tickFormat={(t: number) => data[t - 1]?.asset ?? ''} style={axisStyle} offsetX={110} />
        <VictoryAxis dependentAxis crossAxis={false} style={axisStyle} tickFormat={tick} />
        <VictoryBar data={data} barWidth={Math.max(4, Math.min(12, (h - 60) / data.length - 4))} style={{ data: { fill: colors.slate } }} />
        <VictoryErrorBar data={data} style={{ data: { stroke: colors.ink, strokeWidth: 1 } }} />
      </VictoryChart>
    </ChartBox>
  );
}

export function LedgerCharts({ result, runId }: { result: LedgerResult; runId?: number }) {
  const fileBase = runId ? `keelson-run-${runId}` : 'keelson-run';
  return (
    <View style={{ gap: space.xl }}>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
        <PredictedRealisedChart result={result} fileBase={fileBase} />
        <PricingErrorChart result={result} fileBase={fileBase} />
      </View>
      <CoefficientCharts result={result} fileBase={fileBase} />
    </View>
  );
}
