/**
 * Download a chart as SVG or PNG (web). The chart's own SVG (victory draws one) is serialised with
 * its inline styles, on a white ground, with a title line above and the legend below (the legend
 * lives outside the SVG on screen), and font families given fallbacks so the file reads anywhere.
 * PNG: the same SVG drawn onto a canvas at twice the size. On native platforms nothing is shown.
 *
 * Use: put `ref={chartRef}` on the View that holds the chart and `<ChartDownload target={chartRef} …/>`
 * beside it.
 */
import { useState, type RefObject } from 'react';
import { Platform, Text, View } from 'react-native';
import { Button } from './button';
import { colors, space, text } from './theme';

export interface ChartLegendEntry {
  label: string;
  stroke: string;
  dash?: string;
  /** Line width in the legend sample (a band reads better as a thick line); default 2. */
  width?: number;
}

export interface ChartDownloadProps {
  /** The View (a DOM element on web) that contains the chart's <svg>. */
  target: RefObject<View | null>;
  /** File name without extension; unsafe characters become "-". */
  fileName: string;
  /** Title written above the chart in the file, and named in the buttons' labels. */
  title: string;
  legend?: readonly ChartLegendEntry[];
  /** A line under the legend (units, sample, caution). */
  note?: string;
}

const SVG_NS = 'http://www.w3.org/2000/svg';
const FONT_FALLBACK: Readonly<Record<string, string>> = {
  IBMPlexMono_400Regular: "IBMPlexMono_400Regular, 'IBM Plex Mono', ui-monospace, Menlo, Consolas, monospace",
  IBMPlexMono_500Medium: "IBMPlexMono_500Medium, 'IBM Plex Mono', ui-monospace, Menlo, Consolas, monospace",
  Inter_400Regular: "Inter_400Regular, Inter, 'Helvetica Neue', Arial, sans-serif",
  Inter_600SemiBold: "Inter_600SemiBold, Inter, 'Helvetica Neue', Arial, sans-serif",
};

function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

/** A safe file name: letters, digits, dot, dash, underscore. */
export function chartFileName(name: string): string {
  return name.replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '') || 'chart';
}

/**
 * The markup of a standalone SVG file for `svg`: white ground, title above, legend and note below.
 * Pure DOM (no React): usable from any chart.
 */
export function chartSvgMarkup(svg: SVGSVGElement, opts: { title?: string; legend?: readonly ChartLegendEntry[]; note?: string } = {}): { markup: string; width: number; height: number } {
  const box = svg.getBoundingClientRect();
  const width = Math.round(Number(svg.getAttribute('width')) || box.width || 400);
  const height = Math.round(Number(svg.getAttribute('height')) || box.height || 300);
  const clone = svg.cloneNode(true) as SVGSVGElement;
  clone.setAttribute('xmlns', SVG_NS);
  clone.setAttribute('width', String(width));
  clone.setAttribute('height', String(height));
  if (!clone.getAttribute('viewBox')) clone.setAttribute('viewBox', `0 0 ${width} ${height}`);
  let inner = new XMLSerializer().serializeToString(clone);
  inner = inner.replace(/font-family:\s*([A-Za-z0-9_]+)(?=\s*[;"])/g, (m, family: string) => (FONT_FALLBACK[family] ? `font-family: ${FONT_FALLBACK[family]}` : m));

  const pad = 12;
  const titleH = opts.title ? 28 : 0;
  const legend = opts.legend ?? [];
  // Legend entries in rows that fit the width (a rough 7 px per character at 12 px).
  const rows: { entry: ChartLegendEntry; x: number }[][] = [];
  let row: { entry: ChartLegendEntry; x: number }[] = [];
  let x = pad;
  for (const entry of legend) {
    const w = 34 + entry.label.length * 7 + 16;
    if (row.length && x + w > width - pad) {
      rows.push(row);
      row = [];
      x = pad;
    }
    row.push({ entry, x });
    x += w;
  }
  if (row.length) rows.push(row);
  const legendH = rows.length * 20 + (rows.length ? 6 : 0);
  const noteH = opts.note ? 20 : 0;
  const total = titleH + height + legendH + noteH + (legendH || noteH ? pad : 0);
  const sans = FONT_FALLBACK.Inter_400Regular!;
  const parts: string[] = [
    `<svg xmlns="${SVG_NS}" width="${width}" height="${total}" viewBox="0 0 ${width} ${total}">`,
    `<rect x="0" y="0" width="${width}" height="${total}" fill="#FFFFFF"/>`,
  ];
  if (opts.title) parts.push(`<text x="${pad}" y="19" font-size="14" font-weight="600" fill="${colors.ink}" style="font-family: ${sans};">${esc(opts.title)}</text>`);
  parts.push(`<g transform="translate(0 ${titleH})">${inner}</g>`);
  rows.forEach((r, i) => {
    const y = titleH + height + 14 + i * 20;
    for (const { entry, x: ex } of r) {
      parts.push(
        `<line x1="${ex}" y1="${y - 4}" x2="${ex + 26}" y2="${y - 4}" stroke="${esc(entry.stroke)}" stroke-width="${entry.width ?? 2}"${entry.dash ? ` stroke-dasharray="${esc(entry.dash)}"` : ''}/>`,
        `<text x="${ex + 32}" y="${y}" font-size="12" fill="${colors.ink}" style="font-family: ${sans};">${esc(entry.label)}</text>`,
      );
    }
  });
  if (opts.note) parts.push(`<text x="${pad}" y="${titleH + height + legendH + 16}" font-size="11" fill="${colors.slate}" style="font-family: ${sans};">${esc(opts.note)}</text>`);
  parts.push('</svg>');
  return { markup: parts.join(''), width, height: total };
}

function saveBlob(blob: Blob, name: string): void {
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  a.rel = 'noopener';
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/** Renders SVG markup onto a canvas at `scale` and resolves with a PNG blob. */
export async function svgToPng(markup: string, width: number, height: number, scale = 2): Promise<Blob> {
  const img = new Image();
  img.decoding = 'sync';
  img.src = `data:image/svg+xml;charset=utf-8,${encodeURIComponent(markup)}`;
  await img.decode();
  const canvas = document.createElement('canvas');
  canvas.width = Math.round(width * scale);
  canvas.height = Math.round(height * scale);
  const ctx = canvas.getContext('2d');
  if (!ctx) throw new Error('This browser cannot draw on a canvas');
  ctx.scale(scale, scale);
  ctx.drawImage(img, 0, 0, width, height);
  return new Promise((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('The PNG could not be made'))), 'image/png'));
}

/** Downloads the chart inside `el` as `format`. Throws when `el` holds no SVG. */
export async function downloadChart(el: Element, format: 'svg' | 'png', opts: { fileName: string; title?: string; legend?: readonly ChartLegendEntry[]; note?: string }): Promise<void> {
  const svg = el.querySelector('svg');
  if (!svg) throw new Error('There is no chart to download yet');
  const { markup, width, height } = chartSvgMarkup(svg, opts);
  const name = chartFileName(opts.fileName);
  if (format === 'svg') saveBlob(new Blob([markup], { type: 'image/svg+xml' }), `${name}.svg`);
  else saveBlob(await svgToPng(markup, width, height), `${name}.png`);
}

/** "SVG" and "PNG" buttons that download the chart in `target` (web only). */
export function ChartDownload({ target, fileName, title, legend, note }: ChartDownloadProps) {
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState<'svg' | 'png' | null>(null);
  if (Platform.OS !== 'web') return null;
  const run = (format: 'svg' | 'png') => {
    const el = target.current as unknown as Element | null;
    if (!el || typeof el.querySelector !== 'function') return setError('There is no chart to download yet');
    setError(null);
    setBusy(format);
    downloadChart(el, format, { fileName, title, legend, note })
      .catch((e: unknown) => setError(e instanceof Error ? e.message : 'The download failed'))
      .finally(() => setBusy(null));
  };
  return (
    <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.xs }}>
      <Text style={text.muted}>Download</Text>
      <Button compact variant="quiet" label="SVG" accessibilityLabel={`Download ${title} as SVG`} busy={busy === 'svg'} onPress={() => run('svg')} />
      <Button compact variant="quiet" label="PNG" accessibilityLabel={`Download ${title} as PNG`} busy={busy === 'png'} onPress={() => run('png')} />
      {error ? <Text style={[text.muted, { color: colors.rust }]}>{error}</Text> : null}
    </View>
  );
}
