/**
 * The invented demo libraries: seeded once (idempotent), imported through the upload pipeline
 * (percent converted), committed CSVs equal to what the generator produces, and — a seeded
 * simulation with known truth — the factor ledger on the monthly demo gives the population
 * verdicts (scripts/generate-demo-data.ts: TIDE, BALLAST needed and priced; SWELL priced, not
 * needed; DRIFT neither; GALE needed, not priced alone).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { openDb, type Db } from '../../server/db/client';
import { seedDemo } from '../../server/seed/index';
import { loadEditionData, type EditionData } from '../../server/services/edition-data';
import { type GmmStage, type FirstStageWeighting } from '../../lib/gmm/index';
import { estimateLedger } from '../gmm/helpers';
import { DAILY_FILE, DEMO_DIR, MARKET_FILE, generateDaily, generateMarket, marketTruth, toCsv } from '../../scripts/generate-demo-data';

let db: Db;
beforeAll(async () => {
  db = openDb(':memory:');
  await seedDemo(db);
});
afterAll(() => db.$client.close());

function editionOf(name: string): EditionData {
  const row = db.$client
    .prepare('select e.id from library_editions e join libraries l on l.id = e.library_id where l.name = ?')
    .get(name) as { id: number };
  return loadEditionData(db, row.id);
}

describe('demo libraries', () => {
  it('seeds two shared libraries once, and not again on the next start', async () => {
    const libs = db.$client.prepare('select name, visibility from libraries order by id').all();
    expect(libs).toEqual([
      { name: 'Harbour market (demo)', visibility: 'shared' },
      { name: 'Dockside daily (demo)', visibility: 'shared' },
    ]);
    expect(await seedDemo(db)).toEqual({ users: 0, libraries: 0 });
    expect((db.$client.prepare('select count(*) as n from library_editions').get() as { n: number }).n).toBe(2);
  });

  it('the committed CSVs are exactly what the seeded generator writes', () => {
    expect(readFileSync(join(DEMO_DIR, MARKET_FILE), 'utf8')).toBe(toCsv(generateMarket(), 100, 4));
    expect(readFileSync(join(DEMO_DIR, DAILY_FILE), 'utf8')).toBe(toCsv(generateDaily(), 1, 7));
  });

  it('stores the monthly percent file as decimals with the chosen kinds', () => {
    const d = editionOf('Harbour market (demo)');
    expect(d.frequency).toBe('monthly');
    expect(d.dates).toHaveLength(600);
    expect(d.dates[0]).toBe('1975-01');
    expect(d.series.filter((s) => s.kind === 'asset')).toHaveLength(25);
    expect(d.series.filter((s) => s.kind === 'factor').map((s) => [s.name, s.traded])).toEqual([
      ['TIDE', true],
      ['SWELL', true],
      ['DRIFT', true],
      ['GALE', false],
      ['BALLAST', true],
    ]);
    // The file's first cell is 2.4839 (percent) → 0.024839 after conversion.
    expect(d.series[0]!.values[0]).toBeCloseTo(0.024839, 15);
    const daily = editionOf('Dockside daily (demo)');
    expect(daily.frequency).toBe('daily');
    expect(daily.series.find((s) => s.name === 'Slipway')!.values.filter((v) => v === null)).toHaveLength(3);
  });

  it('population truth: λ = Σ_f b is zero for DRIFT and GALE and not for the others (identity check)', () => {
    const { b, lambda } = marketTruth();
    expect(b[1]).toBe(0);
    expect(b[2]).toBe(0);
    expect(Math.abs(lambda[3]!)).toBeLessThan(1e-15);
    expect(lambda[2]).toBe(0);
    expect(lambda[1]).toBeGreaterThan(0.005);
  });

  it.each([
    ['first', 'identity'],
    ['second', 'identity'],
    ['iterated', 'identity'],
    ['second', 'second-moment'],
  ] as const)('the ledger on the demo gives the population verdicts (%s stage, %s weighting, excess over RF)', (stage: GmmStage, weighting: FirstStageWeighting) => {
    const d = editionOf('Harbour market (demo)');
    const rf = d.series.find((s) => s.kind === 'rf')!.values as number[];
    const assets = d.series.filter((s) => s.kind === 'asset');
    const factors = d.series.filter((s) => s.kind === 'factor');
    const T = d.dates.length;
    const r = estimateLedger({
      assetNames: assets.map((s) => s.name),
      returns: Array.from({ length: T }, (_, t) => assets.map((s) => (s.values[t] as number) - rf[t]!)),
      factorNames: factors.map((s) => s.name),
      factors: Array.from({ length: T }, (_, t) => factors.map((s) => s.values[t] as number)),
      traded: factors.map((s) => s.traded),
      options: { stage, weighting, lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05 },
    });
    const verdicts = Object.fromEntries(r.factors.map((f) => [f.name, f.verdict]));
    expect(verdicts).toEqual({
      TIDE: 'needed and priced',
      SWELL: 'priced, not needed',
      DRIFT: 'neither',
      GALE: 'needed, not priced alone',
      BALLAST: 'needed and priced',
    });
  });
});
