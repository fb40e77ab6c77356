/**
 * Layout checks for charts and result tables, measured in the page: tick labels that overlap one
 * another or leave their SVG, date labels off the bottom edge, a missing 0 tick, clipped table
 * cells and words broken across lines.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { SCREENSHOT_DIR } from './helpers';
import type { Locator, Page } from 'playwright-core';
import { expect } from 'vitest';

export interface ChartLabels {
  /** Text of every non-empty <text> in the chart's SVG, in document order. */
  texts: string[];
  /** Pairs of labels whose boxes intersect (more than half a pixel each way). */
  overlaps: string[];
  /** Labels that reach outside the SVG's box. */
  outside: string[];
  /** Labels that look like dates and sit above the plot's bottom line (the lowest value label). */
  datesAboveBottom: string[];
}

/** Measures the <text> labels of the (first) SVG inside `chart`. */
export async function chartLabels(chart: Locator): Promise<ChartLabels> {
  return chart.evaluate((el) => {
    const svg = el.querySelector('svg')!;
    const box = svg.getBoundingClientRect();
    const items = Array.from(svg.querySelectorAll('text'))
      .map((t) => ({ text: (t.textContent ?? '').trim(), r: t.getBoundingClientRect() }))
      .filter((x) => x.text !== '' && x.r.width > 0);
    const overlaps: string[] = [];
    for (let i = 0; i < items.length; i++) {
      for (let j = i + 1; j < items.length; j++) {
        const a = items[i]!.r;
        const b = items[j]!.r;
        const ox = Math.min(a.right, b.right) - Math.max(a.left, b.left);
        const oy = Math.min(a.bottom, b.bottom) - Math.max(a.top, b.top);
        if (ox > 0.5 && oy > 0.5) overlaps.push(`${items[i]!.text} × ${items[j]!.text}`);
      }
    }
    const outside = items.filter((x) => x.r.left < box.left - 0.5 || x.r.right > box.right + 0.5 || x.r.top < box.top - 0.5 || x.r.bottom > box.bottom + 0.5).map((x) => x.text);
    // Dates belong under the plot: below the middle of the lowest value label (the plot's bottom line).
    const isDate = (t: string) => /^\d{4}-\d{2}/.test(t);
    const values = items.filter((x) => !isDate(x.text) && /\d/.test(x.text));
    const floor = Math.max(...values.map((x) => (x.r.top + x.r.bottom) / 2));
    const datesAboveBottom = items.filter((x) => isDate(x.text) && x.r.top < floor).map((x) => `${x.text} (top ${Math.round(x.r.top - floor)} px from the plot's bottom)`);
    return { texts: items.map((x) => x.text), overlaps, outside, datesAboveBottom };
  });
}

/** Every chart check at once, with the zero label the axis must show ("0" or "0%"). */
export async function expectReadableChart(chart: Locator, zero: string | null): Promise<ChartLabels> {
  const m = await chartLabels(chart);
  expect(m.overlaps, 'overlapping labels').toEqual([]);
  expect(m.outside, 'labels outside the chart').toEqual([]);
  expect(m.datesAboveBottom, 'date labels above the bottom edge').toEqual([]);
  if (zero !== null) expect(m.texts, 'a 0 tick').toContain(zero);
  // No needless decimals such as "25.00": when every decimal label of the chart ends in 0, the last place says nothing.
  const decimals = m.texts.filter((t) => /^[−-]?\d+\.\d+[%×]?$/.test(t));
  const needless = decimals.length > 0 && decimals.every((t) => /0[%×]?$/.test(t));
  expect(needless ? decimals : [], 'labels with needless zeros').toEqual([]);
  return m;
}

export interface TableFit {
  /** Cells (and text inside them) whose content is wider than their box. */
  clipped: string[];
  /** Words that the browser broke across two lines. */
  brokenWords: string[];
  /** Cells that reach past the right edge of `container`. */
  spilled: string[];
}

/** Measures every cell and header of the tables inside `scope`. */
export async function tableFit(scope: Locator, container: Locator): Promise<TableFit> {
  const right = (await container.boundingBox())!;
  return scope.evaluate((el, edge) => {
    const cells = Array.from(el.querySelectorAll('[role=table] [role=cell], [role=table] [role=columnheader]')) as HTMLElement[];
    const clipped: string[] = [];
    const brokenWords: string[] = [];
    const spilled: string[] = [];
    for (const c of cells) {
      const all = [c, ...(Array.from(c.querySelectorAll('*')) as HTMLElement[])];
      if (all.some((x) => x.scrollWidth > x.clientWidth + 0.5 && x.clientWidth > 0)) clipped.push(c.textContent ?? '');
      if (c.getBoundingClientRect().right > edge + 0.5) spilled.push(c.textContent ?? '');
      const walker = document.createTreeWalker(c, NodeFilter.SHOW_TEXT);
      for (let n = walker.nextNode(); n; n = walker.nextNode()) {
        const s = n.textContent ?? '';
        const re = /\S+/g;
        for (let m = re.exec(s); m; m = re.exec(s)) {
          const range = document.createRange();
          range.setStart(n, m.index);
          range.setEnd(n, m.index + m[0].length);
          const tops = new Set(Array.from(range.getClientRects()).filter((r) => r.width > 0).map((r) => Math.round(r.top)));
          if (tops.size > 1) brokenWords.push(m[0]);
        }
      }
    }
    return { clipped, brokenWords, spilled };
  }, right.x + right.width);
}

export async function expectTablesFit(scope: Locator, container: Locator): Promise<void> {
  const f = await tableFit(scope, container);
  expect(f.clipped, 'clipped cells').toEqual([]);
  expect(f.brokenWords, 'words broken across lines').toEqual([]);
  expect(f.spilled, 'cells past the card').toEqual([]);
}

/** Clicks a download button and returns the saved file's bytes and suggested name. */
export async function downloadFrom(page: Page, button: Locator): Promise<{ name: string; bytes: Buffer }> {
  const [d] = await Promise.all([page.waitForEvent('download'), button.click()]);
  return { name: d.suggestedFilename(), bytes: readFileSync((await d.path())!) };
}

/** Checks an SVG file (standalone, with its title) and a PNG file (signature, twice the SVG's size). */
export async function expectChartDownloads(page: Page, scope: Locator, title: string): Promise<void> {
  const svg = await downloadFrom(page, scope.getByRole('button', { name: `Download ${title} as SVG` }));
  expect(svg.name).toMatch(/\.svg$/);
  const text = svg.bytes.toString('utf8');
  expect(text.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
  expect(text).toContain(title.replace(/&/g, '&amp;'));
  const w = Number(/^<svg[^>]* width="(\d+)"/.exec(text)![1]);
  const h = Number(/^<svg[^>]* height="(\d+)"/.exec(text)![1]);
  const png = await downloadFrom(page, scope.getByRole('button', { name: `Download ${title} as PNG` }));
  expect(png.name).toMatch(/\.png$/);
  // PNG signature and IHDR size (PNG specification, ISO/IEC 15948): width and height at bytes 16 and 20.
  expect(png.bytes.subarray(0, 8).toString('hex')).toBe('89504e470d0a1a0a');
  expect(png.bytes.readUInt32BE(16)).toBe(2 * w);
  expect(png.bytes.readUInt32BE(20)).toBe(2 * h);
  expect(png.bytes.length).toBeGreaterThan(2000);
  // Kept beside the screenshots, to look at.
  writeFileSync(join(SCREENSHOT_DIR, `download-${png.name}`), png.bytes);
  writeFileSync(join(SCREENSHOT_DIR, `download-${svg.name}`), svg.bytes);
}
