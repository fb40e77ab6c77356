/**
 * The factor ledger: per factor b (needed?) and λ (priced?) with the standard and the robust
 * standard error, t and p side by side, the bootstrap p beside them, the Holm and BY adjusted p
 * of the b tests, the thin-beta flag and the verdict (naming its basis). Wide: a table (sticky
 * header, verdict last); phone: one card per factor, the adjusted p behind the cell's detail.
 * Per-factor drop tests and spanning checks, and the joint test of the chosen set, follow in
 * their own table. One tap on a cell opens what the test asks and the numbers behind it.
 * Every p prints through shared/format.ts's formatP with the run's level, so a printed p never
 * contradicts its star.
 */
import { useState, type ReactNode } from 'react';
import { Pressable, StyleSheet, Text, View, type ViewStyle } from 'react-native';
import type { LedgerResult } from '../shared/runs';
import { DECIMALS, formatFixed, formatP } from '../shared/format';
import { useIsWide } from '../hooks/use-layout';
import { VerdictChip } from './chip';
import { LedgerDetailModal, TEST_TITLES, type LedgerTest } from './ledger-detail';
import { colors, fonts, radius, space, text } from './theme';

type Factor = LedgerResult['factors'][number];

/** Decimals per ledger column (fixed, so columns line up). λ and α are shown in % per period. */
export const LEDGER_DECIMALS = { b: DECIMALS.b, se: DECIMALS.b, t: DECIMALS.t, p: DECIMALS.p, lambdaPct: DECIMALS.pct, chi2: DECIMALS.chi2, alphaPct: DECIMALS.pct } as const;

/** Text of a bootstrap p cell: the value, "pending" while the run's bootstrap runs, "—" when none was asked. */
export function bootText(p: number | null | undefined, pending: boolean, level: number): string {
  if (p !== null && p !== undefined) return formatP(p, { level });
  return pending ? 'pending' : '—';
}

/** What the ledger needs to know beyond the result: is the run's bootstrap still running? */
export interface LedgerViewProps {
  result: LedgerResult;
  /** The run's bootstrap job is queued or running (its p-values are not in the ledger yet). */
  bootstrapPending?: boolean;
}

/** Facts about a ledger that decide its columns. */
export function ledgerShape(result: LedgerResult, bootstrapPending = false) {
  const hasRobust = result.factors.some((f) => f.robust !== null);
  const bootAsked = result.bootstrap !== null || result.options.bootstrap !== null || bootstrapPending;
  return { hasRobust, bootAsked, level: result.options.level };
}

/** Column widths (px) of the wide table: sized for 12 px tabular figures, "< 0.001*" the widest p. Sum ≈ 950 px with every group. */
const W = { est: 92, se: 54, t: 52, p: 68, boot: 68, adj: 68, thin: 80, verdict: 146, factor: 84 } as const;

function Cell({ children, onPress, label, width, style }: { children: ReactNode; onPress?: () => void; label: string; width: number; style?: ViewStyle }) {
  return (
    <View role="cell" style={[styles.tdTight, { width }, style]} aria-label={!onPress && label ? label : undefined}>
      {onPress ? (
        <Pressable
          onPress={onPress}
          role="button"
          aria-label={label}
          style={(state) => [styles.cellPress, (state as { hovered?: boolean }).hovered && { backgroundColor: colors.brassTint }]}
        >
          {children}
        </Pressable>
      ) : (
        children
      )}
    </View>
  );
}

/** A number cell's text; `star` (default) keeps room for the significance marker so columns line up. */
function NumText({ value, marked, muted, star = true }: { value: string; marked?: boolean; muted?: boolean; star?: boolean }) {
  return (
    <Text style={[styles.num, marked && styles.marked, muted && { color: colors.slate }]} numberOfLines={1}>
      {value}
      {star ? <Text style={styles.star}>{marked ? '*' : ' '}</Text> : null}
    </Text>
  );
}

export function LedgerTable({ result, bootstrapPending = false }: LedgerViewProps) {
  const wide = useIsWide();
  const { hasRobust, bootAsked, level } = ledgerShape(result, bootstrapPending);
  const [open, setOpen] = useState<{ f: Factor; test: LedgerTest } | null>(null);
  const sig = (p: number | null | undefined) => p !== null && p !== undefined && p < level;
  const show = (f: Factor, test: LedgerTest) => () => setOpen({ f, test });
  const P = (p: number | null | undefined) => formatP(p, { level });
  const dagger = result.lagWarning ? '†' : '';

  // ---- wide: a table ----
  type Line = { key: 'b' | 'lambda'; label: string; est: number; std: { se: number; t: number; p: number }; rob: { se: number; t: number; p: number } | null; boot: number | null | undefined };
  const lines = (f: Factor): Line[] => [
    {
      key: 'b',
      label: 'b',
      est: f.b,
      std: { se: f.seB, t: f.tB, p: f.pB },
      rob: f.robust ? { se: f.robust.seB, t: f.robust.tB, p: f.robust.pB } : null,
      boot: f.bootstrap?.pB,
    },
    {
      key: 'lambda',
      label: 'λ %',
      est: f.lambda * 100,
      std: { se: f.seLambda * 100, t: f.tLambda, p: f.pLambda },
      rob: f.robust ? { se: f.robust.seLambda * 100, t: f.robust.tLambda, p: f.robust.pLambda } : null,
      boot: f.bootstrap?.pLambda,
    },
  ];
  /** The p the verdict rests on for this line (marks the estimate). */
  const basisP = (f: Factor, l: Line) => {
    if (result.verdictBasis === 'bootstrap' && l.boot !== null && l.boot !== undefined) return l.boot;
    if (result.verdictBasis !== 'standard' && l.rob) return l.rob.p;
    return l.std.p;
  };
  const dec = (k: Line['key']) => (k === 'b' ? LEDGER_DECIMALS.b : LEDGER_DECIMALS.lambdaPct);
  const what = (k: Line['key']) => (k === 'b' ? 'b' : 'λ');

  const minW = W.factor + W.est + (W.se + W.t + W.p) * (hasRobust ? 2 : 1) + (bootAsked ? W.boot : 0) + 2 * W.adj + W.thin + W.verdict;
  const groupHead = (title: string, width: number, sub?: string) => (
    <View style={[styles.group, { width }]}>
      <Text style={styles.groupTitle} numberOfLines={1}>
        {title}
      </Text>
      {sub ? (
        <Text style={styles.groupSub} numberOfLines={1}>
          {sub}
        </Text>
      ) : null}
    </View>
  );
  const colHead = (title: string, width: number, align: 'left' | 'right' = 'right') => (
    <Text key={title + width} role="columnheader" style={[styles.th, { width, textAlign: align }]} numberOfLines={1}>
      {title}
    </Text>
  );

  const tableBody = (
    <View role="table" aria-label="Factor ledger" style={[styles.table, { minWidth: minW }]}>
      <View style={styles.thead}>
        <View style={styles.groupRow}>
          <View style={{ flex: 1, minWidth: W.factor }} />
          <View style={{ width: W.est }} />
          {groupHead('standard', W.se + W.t + W.p, hasRobust ? 'assumes the model holds' : undefined)}
          {hasRobust ? groupHead('robust', W.se + W.t + W.p, 'misspecification-robust') : null}
          {bootAsked ? groupHead('bootstrap', W.boot) : null}
          {groupHead('adjusted p of b', 2 * W.adj, `from ${result.adjustedBasis} p`)}
          <View style={{ width: W.thin + W.verdict }} />
        </View>
        <View role="row" style={styles.headRow}>
          <Text role="columnheader" style={[styles.th, { flex: 1, minWidth: W.factor, textAlign: 'left' }]}>
            Factor
          </Text>
          {colHead('estimate', W.est)}
          {colHead(`se${dagger}`, W.se)}
          {colHead('t', W.t)}
          {colHead('p', W.p)}
          {hasRobust ? [colHead(`se${dagger} `, W.se), colHead('t ', W.t), colHead('p ', W.p)] : null}
          {bootAsked ? colHead('p  ', W.boot) : null}
          {colHead('Holm', W.adj)}
          {colHead('BY', W.adj)}
          {colHead('thin β', W.thin, 'left')}
          {colHead('Verdict', W.verdict, 'left')}
        </View>
      </View>
      {result.factors.map((f) => {
        const flagged = !!f.thinBeta?.flag;
        return (
          <View key={f.name} role="rowgroup" aria-label={`Factor ${f.name}`} style={[styles.factorRow, flagged && styles.flaggedRow]}>
            <View role="rowheader" style={[styles.td, { flex: 1, minWidth: W.factor }]}>
              <Text style={text.strong} numberOfLines={1}>
                {f.name}
              </Text>
              <Text style={styles.small}>{f.traded ? 'traded' : 'not traded'}</Text>
              {flagged ? <Text style={styles.flag}>⚑ thin β</Text> : null}
            </View>
            <View style={{ flexDirection: 'column' }}>
              {lines(f).map((l) => (
                <View key={l.key} role="row" style={[styles.subRow, l.key === 'lambda' && styles.subRowLast]}>
                  <Cell width={W.est} onPress={show(f, l.key)} label={`${what(l.key)} of ${f.name}: what the test asks`}>
                    <View style={styles.estWrap}>
                      <Text style={styles.estLabel}>{l.label}</Text>
                      <NumText value={formatFixed(l.est, dec(l.key))} marked={sig(basisP(f, l))} />
                    </View>
                  </Cell>
                  <Cell width={W.se} onPress={show(f, l.key)} label={`standard se of ${what(l.key)} for ${f.name}`}>
                    <NumText value={formatFixed(l.std.se, dec(l.key))} star={false} />
                  </Cell>
                  <Cell width={W.t} onPress={show(f, l.key)} label={`standard t of ${what(l.key)} for ${f.name}`}>
                    <NumText value={formatFixed(l.std.t, LEDGER_DECIMALS.t)} marked={sig(l.std.p)} muted star={false} />
                  </Cell>
                  <Cell width={W.p} onPress={show(f, l.key)} label={`standard p of ${what(l.key)} for ${f.name}`}>
                    <NumText value={P(l.std.p)} marked={sig(l.std.p)} />
                  </Cell>
                  {hasRobust ? (
                    <>
                      <Cell width={W.se} onPress={show(f, l.key)} label={`robust se of ${what(l.key)} for ${f.name}`} style={styles.robustCell}>
                        <NumText value={formatFixed(l.rob?.se, dec(l.key))} star={false} />
                      </Cell>
                      <Cell width={W.t} onPress={show(f, l.key)} label={`robust t of ${what(l.key)} for ${f.name}`} style={styles.robustCell}>
                        <NumText value={formatFixed(l.rob?.t, LEDGER_DECIMALS.t)} marked={sig(l.rob?.p)} muted star={false} />
                      </Cell>
                      <Cell width={W.p} onPress={show(f, l.key)} label={`robust p of ${what(l.key)} for ${f.name}`} style={styles.robustCell}>
                        <NumText value={P(l.rob?.p)} marked={sig(l.rob?.p)} />
                      </Cell>
                    </>
                  ) : null}
                  {bootAsked ? (
                    <Cell width={W.boot} onPress={show(f, l.key)} label={`bootstrap p of ${what(l.key)} for ${f.name}`}>
                      <NumText value={bootText(l.boot, bootstrapPending, level)} marked={sig(l.boot)} muted={l.boot === null || l.boot === undefined} />
                    </Cell>
                  ) : null}
                  <Cell width={W.adj} onPress={l.key === 'b' ? show(f, 'b') : undefined} label={l.key === 'b' ? `Holm adjusted p of b for ${f.name}` : ''}>
                    {l.key === 'b' ? <NumText value={P(f.pHolm)} marked={sig(f.pHolm)} /> : null}
                  </Cell>
                  <Cell width={W.adj} onPress={l.key === 'b' ? show(f, 'b') : undefined} label={l.key === 'b' ? `BY adjusted p of b for ${f.name}` : ''}>
                    {l.key === 'b' ? <NumText value={P(f.pBY)} marked={sig(f.pBY)} /> : null}
                  </Cell>
                </View>
              ))}
            </View>
            <Cell width={W.thin} onPress={show(f, 'thin')} label={`thin-beta test of ${f.name}: ${f.thinBeta ? (flagged ? 'flagged' : 'no flag') : 'not computed'}`}>
              <ThinBeta f={f} level={level} />
            </Cell>
            <View role="cell" style={[styles.td, { width: W.verdict }]}>
              <Pressable onPress={show(f, 'verdict')} role="button" aria-label={`Verdict for ${f.name}: ${f.verdict}`}>
                <VerdictChip verdict={f.verdict} basis={result.verdictBasis} thinFlag={flagged} />
              </Pressable>
            </View>
          </View>
        );
      })}
    </View>
  );

  // The table needs minW px; where the room is narrower (a wide window with the side bar, 900–1230
  // px), the factors show as cards, as on a phone, instead of a table that scrolls sideways.
  const [boxW, setBoxW] = useState(0);
  const asTable = wide && (boxW === 0 || boxW >= minW);

  return (
    <View style={{ gap: space.sm }} onLayout={(e) => setBoxW(e.nativeEvent.layout.width)}>
      <Text style={text.muted}>
        Bold with * : p below {level}. λ in % per period. {asTable ? 'Tap any number' : 'Tap a line'} for what the test asks
        {asTable ? '' : ' (adjusted p under b)'}.
      </Text>
      {result.lagWarning ? (
        <View style={styles.warn} role="note" aria-label="Lag warning">
          <Text style={styles.warnText}>† {result.lagWarning}</Text>
        </View>
      ) : null}
      {asTable ? (
        tableBody
      ) : (
        <View role="list" aria-label="Factor ledger" style={{ gap: space.sm }}>
          {result.factors.map((f) => (
            <View role="listitem" key={f.name}>
              <FactorCard f={f} result={result} bootstrapPending={bootstrapPending} onShow={(test) => setOpen({ f, test })} />
            </View>
          ))}
        </View>
      )}
      <LedgerDetailModal result={result} bootstrapPending={bootstrapPending} factor={open?.f ?? null} test={open?.test ?? null} onClose={() => setOpen(null)} />
    </View>
  );
}

/** The thin-beta cell: "no flag" or an unmistakable flag, with the test's p under it. */
function ThinBeta({ f, level }: { f: Factor; level: number }) {
  if (!f.thinBeta) return <Text style={styles.small}>not computed</Text>;
  return (
    <View style={{ gap: 1 }}>
      {f.thinBeta.flag ? (
        <Text style={styles.flagCell} numberOfLines={1}>
          ⚑ FLAGGED
        </Text>
      ) : (
        <Text style={styles.noFlag} numberOfLines={1}>
          no flag
        </Text>
      )}
      <Text style={[styles.smallNum, { textAlign: 'left' }]} numberOfLines={1}>
        p {formatP(f.thinBeta.p, { level })}
      </Text>
    </View>
  );
}

/** Phone: one card per factor; b and λ each with a small standard / robust / bootstrap grid. */
function FactorCard({ f, result, bootstrapPending, onShow }: { f: Factor; result: LedgerResult; bootstrapPending: boolean; onShow: (t: LedgerTest) => void }) {
  const { hasRobust, bootAsked, level } = ledgerShape(result, bootstrapPending);
  const sig = (p: number | null | undefined) => p !== null && p !== undefined && p < level;
  const P = (p: number | null | undefined) => formatP(p, { level });
  const flagged = !!f.thinBeta?.flag;
  const dagger = result.lagWarning ? '†' : '';
  const grid = (key: 'b' | 'lambda') => {
    const isB = key === 'b';
    const d = isB ? LEDGER_DECIMALS.b : LEDGER_DECIMALS.lambdaPct;
    const scale = isB ? 1 : 100;
    const est = isB ? f.b : f.lambda * 100;
    const rows: [string, string, string, string, boolean][] = [
      ['standard', formatFixed((isB ? f.seB : f.seLambda) * scale, d), formatFixed(isB ? f.tB : f.tLambda, 2), P(isB ? f.pB : f.pLambda), sig(isB ? f.pB : f.pLambda)],
    ];
    if (hasRobust) {
      const r = f.robust;
      rows.push([
        'robust',
        formatFixed(r ? (isB ? r.seB : r.seLambda) * scale : null, d),
        formatFixed(r ? (isB ? r.tB : r.tLambda) : null, 2),
        P(r ? (isB ? r.pB : r.pLambda) : null),
        sig(r ? (isB ? r.pB : r.pLambda) : null),
      ]);
    }
    if (bootAsked) {
      const bp = isB ? f.bootstrap?.pB : f.bootstrap?.pLambda;
      rows.push(['bootstrap', '', '', bootText(bp, bootstrapPending, level), sig(bp)]);
    }
    const title = isB ? 'b · needed?' : 'λ, % · priced?';
    return (
      <Pressable
        onPress={() => onShow(key)}
        role="button"
        aria-label={`${isB ? 'b' : 'λ'} of ${f.name}: what the test asks`}
        style={styles.cardBlock}
      >
        <View style={[styles.cardLine, { borderTopWidth: 0 }]}>
          <Text style={[text.body, { flex: 1, fontSize: 14 }]}>{title}</Text>
          <Text style={styles.cardEst} numberOfLines={1}>
            {formatFixed(est, d)}
          </Text>
        </View>
        <View role="table" aria-label={`${isB ? 'b' : 'λ'} of ${f.name}`}>
          <View role="row" style={styles.miniRow}>
            <Text role="columnheader" style={[styles.miniHead, { flex: 1, textAlign: 'left' }]}>
              basis
            </Text>
            <Text role="columnheader" style={[styles.miniHead, { width: 64 }]}>
              se{dagger}
            </Text>
            <Text role="columnheader" style={[styles.miniHead, { width: 52 }]}>
              t
            </Text>
            <Text role="columnheader" style={[styles.miniHead, { width: 72 }]}>
              p
            </Text>
          </View>
          {rows.map(([name, se, t, p, marked]) => (
            <View key={name} role="row" style={styles.miniRow} aria-label={`${name} ${isB ? 'b' : 'λ'} of ${f.name}`}>
              <Text role="cell" style={[styles.small, { flex: 1 }]}>
                {name}
              </Text>
              <Text role="cell" style={[styles.cardNum, { width: 64, textAlign: 'right' }]} numberOfLines={1}>
                {se}
              </Text>
              <Text role="cell" style={[styles.cardNum, { width: 52, textAlign: 'right', color: colors.slate }, marked && styles.marked]} numberOfLines={1}>
                {t}
              </Text>
              <Text role="cell" style={[styles.cardNum, { width: 72, textAlign: 'right' }, marked && styles.marked]} numberOfLines={1}>
                {p}
                {marked ? '*' : ' '}
              </Text>
            </View>
          ))}
        </View>
      </Pressable>
    );
  };
  return (
    <View style={[styles.card, flagged && styles.flaggedCard]} aria-label={`Factor ${f.name}`}>
      <View style={styles.cardHead}>
        <View style={{ flex: 1, minWidth: 0 }}>
          <Text style={text.heading}>{f.name}</Text>
          <Text style={text.muted}>{f.traded ? 'traded' : 'not traded'}</Text>
          {flagged ? <Text style={styles.flag}>⚑ thin-beta flag: b and λ inference unreliable</Text> : null}
        </View>
        <Pressable onPress={() => onShow('verdict')} role="button" aria-label={`Verdict for ${f.name}: ${f.verdict}`} style={{ maxWidth: 170 }}>
          <VerdictChip verdict={f.verdict} basis={result.verdictBasis} thinFlag={flagged} />
        </Pressable>
      </View>
      {grid('b')}
      {grid('lambda')}
      <Pressable onPress={() => onShow('thin')} role="button" aria-label={`thin β of ${f.name}: ${f.thinBeta ? (flagged ? 'flagged' : 'no flag') : 'not computed'}`} style={styles.cardLine}>
        <Text style={[text.body, { flex: 1, fontSize: 14 }]}>thin β</Text>
        {f.thinBeta ? (
          <>
            <Text style={flagged ? styles.flagCell : styles.noFlag}>{flagged ? '⚑ FLAGGED' : 'no flag'}</Text>
            <Text style={[styles.smallNum, { width: 84 }]}>p {P(f.thinBeta.p)}</Text>
          </>
        ) : (
          <Text style={styles.small}>not computed</Text>
        )}
      </Pressable>
      <Pressable onPress={() => onShow('drop')} role="button" aria-label={`drop test of ${f.name}`} style={styles.cardLine}>
        <Text style={[text.body, { flex: 1, fontSize: 14 }]}>drop χ²</Text>
        <Text style={[styles.smallNum, { textAlign: 'right' }]}>{formatFixed(f.chi2Drop?.stat, LEDGER_DECIMALS.chi2)}</Text>
        <Text style={[styles.smallNum, { width: 84 }, sig(f.chi2Drop?.p) && styles.marked]}>
          p {P(f.chi2Drop?.p)}
          {sig(f.chi2Drop?.p) ? '*' : ''}
        </Text>
      </Pressable>
      {bootAsked ? (
        <View style={[styles.cardLine, { borderTopWidth: 0, minHeight: 20 }]}>
          <Text style={[styles.small, { flex: 1 }]}>bootstrap</Text>
          <Text style={[styles.smallNum, { width: 84 }, sig(f.bootstrap?.pDrop) && styles.marked]}>
            p {bootText(f.bootstrap?.pDrop, bootstrapPending, level)}
            {sig(f.bootstrap?.pDrop) ? '*' : ''}
          </Text>
        </View>
      ) : null}
      <Pressable onPress={() => onShow('spanning')} role="button" aria-label={`spanning check of ${f.name}`} style={styles.cardLine}>
        <Text style={[text.body, { flex: 1, fontSize: 14 }]}>spanning α, %</Text>
        {f.spanning ? (
          <>
            <Text style={[styles.smallNum, { textAlign: 'right' }]}>{formatFixed(f.spanning.alpha * 100, LEDGER_DECIMALS.alphaPct)}</Text>
            <Text style={[styles.smallNum, { width: 84 }, sig(f.spanning.p) && styles.marked]}>
              p {P(f.spanning.p)}
              {sig(f.spanning.p) ? '*' : ''}
            </Text>
          </>
        ) : (
          <Text style={styles.small}>{f.traded ? '—' : 'not traded'}</Text>
        )}
      </Pressable>
    </View>
  );
}

/**
 * Wide screens: per factor, the drop test (χ² difference with a common weighting) with its
 * bootstrap p, and the spanning check. Phones show the same numbers in the factor cards.
 */
export function LedgerTestsTable({ result, bootstrapPending = false }: LedgerViewProps) {
  const wide = useIsWide();
  const { bootAsked, level } = ledgerShape(result, bootstrapPending);
  if (!wide) return null;
  const sig = (p: number | null | undefined) => p !== null && p !== undefined && p < level;
  const P = (p: number | null | undefined) => formatP(p, { level });
  const cols = [
    { k: 'chi', title: 'drop χ²', w: 76 },
    { k: 'df', title: 'df', w: 40 },
    { k: 'p', title: 'p', w: 70 },
    ...(bootAsked ? [{ k: 'bp', title: 'bootstrap p', w: 92 }] : []),
    { k: 'a', title: 'span α, %', w: 84 },
    { k: 'st', title: 't', w: 56 },
    { k: 'sp', title: 'p', w: 70 },
  ];
  return (
    <View role="table" aria-label="Drop tests and spanning checks" style={styles.table}>
      <View role="row" style={[styles.headRow, styles.thead]}>
        <Text role="columnheader" style={[styles.th, { flex: 1, minWidth: W.factor, textAlign: 'left' }]}>
          Factor
        </Text>
        {cols.map((c) => (
          <Text key={c.k} role="columnheader" style={[styles.th, { width: c.w }]} numberOfLines={1}>
            {c.title}
          </Text>
        ))}
      </View>
      {result.factors.map((f) => (
        <View key={f.name} role="row" style={[styles.headRow, { backgroundColor: colors.card }]}>
          <Text role="rowheader" style={[text.strong, styles.td, { flex: 1, minWidth: W.factor }]}>
            {f.name}
          </Text>
          <Cell width={76} label={`drop χ² of ${f.name}`}>
            <NumText value={formatFixed(f.chi2Drop?.stat, LEDGER_DECIMALS.chi2)} marked={sig(f.chi2Drop?.p)} />
          </Cell>
          <Cell width={40} label={`drop df of ${f.name}`}>
            <NumText value={f.chi2Drop ? String(f.chi2Drop.df) : '—'} />
          </Cell>
          <Cell width={70} label={`drop p of ${f.name}`}>
            <NumText value={P(f.chi2Drop?.p)} marked={sig(f.chi2Drop?.p)} />
          </Cell>
          {bootAsked ? (
            <Cell width={92} label={`bootstrap drop p of ${f.name}`}>
              <NumText value={bootText(f.bootstrap?.pDrop, bootstrapPending, level)} marked={sig(f.bootstrap?.pDrop)} muted={f.bootstrap?.pDrop == null} />
            </Cell>
          ) : null}
          <Cell width={84} label={`spanning α of ${f.name}`}>
            {f.spanning ? <NumText value={formatFixed(f.spanning.alpha * 100, LEDGER_DECIMALS.alphaPct)} marked={sig(f.spanning.p)} /> : <NumText value={f.traded ? '—' : 'not traded'} muted />}
          </Cell>
          <Cell width={56} label={`spanning t of ${f.name}`}>
            <NumText value={formatFixed(f.spanning?.t, LEDGER_DECIMALS.t)} muted />
          </Cell>
          <Cell width={70} label={`spanning p of ${f.name}`}>
            <NumText value={P(f.spanning?.p)} marked={sig(f.spanning?.p)} />
          </Cell>
        </View>
      ))}
    </View>
  );
}

/** The joint drop test for the chosen set, with bootstrap p beside the asymptotic p. */
export function JointDropCard({ result, bootstrapPending = false }: LedgerViewProps) {
  const j = result.jointDrop;
  if (!j) return null;
  const { bootAsked, level } = ledgerShape(result, bootstrapPending);
  const P = (p: number) => formatP(p, { level });
  const lines: [string, { stat: number; df: number; p: number } | null, number | null | undefined][] = [
    ['Wald test on b (jointly zero)', j.wald, result.bootstrap?.pJointWald],
    ['χ² drop test (common weighting)', j.chi2Drop, result.bootstrap?.pJointDrop],
    ['Joint spanning check', result.jointSpanning ? { stat: result.jointSpanning.stat, df: result.jointSpanning.df, p: result.jointSpanning.p } : null, undefined],
  ];
  return (
    <View style={styles.joint} aria-label="Joint drop test">
      <Text style={text.strong}>Joint test for {j.factors.join(', ')}</Text>
      {lines.map(([label, v, boot]) => (
        <View key={label} style={styles.jointLine} aria-label={label}>
          <Text style={[text.body, { flexGrow: 1, flexShrink: 1, flexBasis: 180 }]}>{label}</Text>
          {v ? (
            <View style={styles.jointNums}>
              <Text style={[styles.lineNum, v.p < level && styles.marked]}>χ² {formatFixed(v.stat, 2)}</Text>
              <Text style={styles.lineSmall}>df {v.df}</Text>
              <Text style={[styles.lineSmall, { minWidth: 84 }, v.p < level && styles.marked]}>
                p {P(v.p)}
                {v.p < level ? '*' : ''}
              </Text>
              {bootAsked && boot !== undefined ? (
                <Text style={[styles.lineSmall, { minWidth: 120 }, boot !== null && boot < level && styles.marked]}>
                  bootstrap p {bootText(boot, bootstrapPending, level)}
                  {boot !== null && boot < level ? '*' : ''}
                </Text>
              ) : null}
            </View>
          ) : (
            <Text style={text.muted}>not reported</Text>
          )}
        </View>
      ))}
    </View>
  );
}

export { TEST_TITLES };

const styles = StyleSheet.create({
  cellPress: { borderRadius: radius.sm, paddingVertical: 2, paddingHorizontal: 2, alignSelf: 'stretch' },
  tdTight: { paddingHorizontal: 2, paddingVertical: 4, justifyContent: 'center' },
  flag: { fontFamily: fonts.textStrong, fontSize: 12, color: colors.rust },
  flagCell: { fontFamily: fonts.textStrong, fontSize: 11, color: colors.onDark, backgroundColor: colors.rust, borderRadius: radius.sm, paddingHorizontal: 4, alignSelf: 'flex-start' },
  noFlag: { fontFamily: fonts.text, fontSize: 12, color: colors.slate },
  small: { fontFamily: fonts.text, fontSize: 12, color: colors.slate },
  smallNum: { fontFamily: fonts.mono, fontSize: 12, color: colors.slate, textAlign: 'right' },
  estWrap: { flexDirection: 'row', alignItems: 'baseline', justifyContent: 'space-between', gap: 2 },
  estLabel: { fontFamily: fonts.text, fontSize: 12, color: colors.slate },
  num: { fontFamily: fonts.mono, fontSize: 12, color: colors.ink, fontVariant: ['tabular-nums'], textAlign: 'right' },
  cardEst: { fontFamily: fonts.monoStrong, fontSize: 15, color: colors.ink, fontVariant: ['tabular-nums'], textAlign: 'right' },
  cardNum: { fontFamily: fonts.mono, fontSize: 13, color: colors.ink, fontVariant: ['tabular-nums'] },
  star: { fontFamily: fonts.monoStrong },
  marked: { fontFamily: fonts.monoStrong, color: colors.ink },
  table: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md, backgroundColor: colors.card },
  thead: { position: 'sticky' as ViewStyle['position'], top: 0, zIndex: 1, backgroundColor: colors.paper, borderTopLeftRadius: radius.md, borderTopRightRadius: radius.md },
  groupRow: { flexDirection: 'row', alignItems: 'flex-end', paddingTop: space.xs },
  group: { borderBottomWidth: 1, borderBottomColor: colors.fog, marginHorizontal: 3, paddingBottom: 2 },
  groupTitle: { fontFamily: fonts.textStrong, fontSize: 12, color: colors.ink, textAlign: 'center' },
  groupSub: { fontFamily: fonts.text, fontSize: 10, color: colors.slate, textAlign: 'center' },
  headRow: { flexDirection: 'row', alignItems: 'center', borderBottomWidth: 1, borderBottomColor: colors.rule },
  factorRow: { flexDirection: 'row', alignItems: 'stretch', borderBottomWidth: 1, borderBottomColor: colors.rule },
  flaggedRow: { backgroundColor: '#F7E9E5', borderLeftWidth: 4, borderLeftColor: colors.rust },
  subRow: { flexDirection: 'row', alignItems: 'center', borderBottomWidth: 1, borderBottomColor: colors.paper, minHeight: 30 },
  subRowLast: { borderBottomWidth: 0 },
  robustCell: { backgroundColor: 'rgba(168,116,42,0.06)' },
  th: { fontFamily: fonts.textStrong, fontSize: 12, color: colors.slate, textAlign: 'right', paddingHorizontal: 4, paddingVertical: 6 },
  td: { paddingHorizontal: 4, paddingVertical: 4, justifyContent: 'center' },
  card: { backgroundColor: colors.card, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md, padding: space.md, gap: 2 },
  flaggedCard: { borderColor: colors.rust, borderLeftWidth: 5 },
  cardHead: { flexDirection: 'row', alignItems: 'flex-start', gap: space.sm, marginBottom: space.xs },
  cardBlock: { borderTopWidth: 1, borderTopColor: colors.rule, paddingVertical: 4, gap: 2 },
  cardLine: { flexDirection: 'row', alignItems: 'center', gap: 6, minHeight: 34, borderTopWidth: 1, borderTopColor: colors.rule },
  miniRow: { flexDirection: 'row', alignItems: 'center', minHeight: 20, gap: 4 },
  miniHead: { fontFamily: fonts.textStrong, fontSize: 11, color: colors.slate, textAlign: 'right' },
  warn: { borderWidth: 1, borderColor: colors.brass, backgroundColor: colors.brassTint, borderRadius: radius.sm, padding: space.sm },
  warnText: { fontFamily: fonts.text, fontSize: 13, color: colors.ink },
  lineNum: { fontFamily: fonts.mono, fontSize: 14, color: colors.ink, textAlign: 'right', minWidth: 64 },
  lineSmall: { fontFamily: fonts.mono, fontSize: 12, color: colors.slate, textAlign: 'right', minWidth: 50 },
  joint: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md, padding: space.md, gap: 2, backgroundColor: colors.card },
  jointLine: { flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: 6, minHeight: 36, borderTopWidth: 1, borderTopColor: colors.rule, paddingVertical: 4 },
  jointNums: { flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: 8, justifyContent: 'flex-end', flexGrow: 1 },
});
