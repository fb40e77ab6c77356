/**
 * The factor ledger: per factor b (needed?) beside λ (priced?), the drop test, the spanning
 * check, the thin-beta flag and the verdict. Wide: a table (sticky header, verdict last); phone:
 * one card per factor. One tap on a cell opens what the test asks and the numbers behind it.
 */
import { useState, type ReactNode } from 'react';
import { Pressable, StyleSheet, Text, View } from 'react-native';
import type { ColumnDef } from '@tanstack/react-table';
import type { LedgerResult } from '../shared/runs';
import { useIsWide } from '../hooks/use-layout';
import { DataTable } from './data-table';
import { VerdictChip } from './chip';
import { Num, formatNum } from './num';
import { LedgerDetailModal, TEST_TITLES, type LedgerTest } from './ledger-detail';
import { colors, fonts, radius, space, text } from './theme';

type Factor = LedgerResult['factors'][number];

/** Decimals per ledger column (fixed, so columns line up). λ and α are shown in % per period. */
export const LEDGER_DECIMALS = { b: 3, t: 2, p: 3, lambdaPct: 3, chi2: 2, alphaPct: 3 } as const;

function Cell({ children, onPress, label }: { children: ReactNode; onPress: () => void; label: string }) {
  return (
    <Pressable onPress={onPress} role="button" aria-label={label} style={(state) => [styles.cellPress, (state as { hovered?: boolean }).hovered && { backgroundColor: colors.brassTint }]}>
      {children}
    </Pressable>
  );
}

export function LedgerTable({ result }: { result: LedgerResult }) {
  const wide = useIsWide();
  const level = result.options.level;
  const [open, setOpen] = useState<{ f: Factor; test: LedgerTest } | null>(null);
  const sig = (p: number | null | undefined) => p !== null && p !== undefined && p < level;
  const show = (f: Factor, test: LedgerTest) => () => setOpen({ f, test });
  const n = (v: number | null | undefined, d: number, marked: boolean, label: string) => (
    <Num value={v} decimals={d} marked={marked} accessibilityLabel={`${label} ${formatNum(v, d)}${marked ? ', significant' : ''}`} />
  );

  const columns: ColumnDef<Factor>[] = [
    {
      id: 'factor',
      header: 'Factor',
      meta: { flex: 1.3 },
      cell: ({ row: { original: f } }) => (
        <View>
          <Text style={text.strong}>
            {f.name}
            {f.thinBeta?.flag ? <Text style={styles.flag}> ◌ thin β</Text> : null}
          </Text>
          {!f.traded ? <Text style={text.muted}>not traded</Text> : null}
        </View>
      ),
    },
    { id: 'b', header: 'b', meta: { numeric: true }, cell: ({ row: { original: f } }) => <Cell onPress={show(f, 'b')} label={`b of ${f.name}: what the test asks`}>{n(f.b, LEDGER_DECIMALS.b, sig(f.pB), 'b')}</Cell> },
    { id: 'tb', header: 't(b)', meta: { numeric: true }, cell: ({ row: { original: f } }) => <Cell onPress={show(f, 'b')} label={`t of b for ${f.name}`}>{n(f.tB, LEDGER_DECIMALS.t, sig(f.pB), 't')}</Cell> },
    { id: 'pb', header: 'p(b)', meta: { numeric: true }, cell: ({ row: { original: f } }) => <Cell onPress={show(f, 'b')} label={`p of b for ${f.name}`}>{n(f.pB, LEDGER_DECIMALS.p, sig(f.pB), 'p')}</Cell> },
    {
      id: 'lambda',
      header: 'λ, %',
      meta: { numeric: true },
      cell: ({ row: { original: f } }) => <Cell onPress={show(f, 'lambda')} label={`λ of ${f.name}: what the test asks`}>{n(f.lambda * 100, LEDGER_DECIMALS.lambdaPct, sig(f.pLambda), 'λ percent')}</Cell>,
    },
    { id: 'tl', header: 't(λ)', meta: { numeric: true }, cell: ({ row: { original: f } }) => <Cell onPress={show(f, 'lambda')} label={`t of λ for ${f.name}`}>{n(f.tLambda, LEDGER_DECIMALS.t, sig(f.pLambda), 't')}</Cell> },
    { id: 'pl', header: 'p(λ)', meta: { numeric: true }, cell: ({ row: { original: f } }) => <Cell onPress={show(f, 'lambda')} label={`p of λ for ${f.name}`}>{n(f.pLambda, LEDGER_DECIMALS.p, sig(f.pLambda), 'p')}</Cell> },
    {
      id: 'drop',
      header: 'χ² drop',
      meta: { numeric: true },
      cell: ({ row: { original: f } }) => <Cell onPress={show(f, 'drop')} label={`drop test of ${f.name}`}>{n(f.chi2Drop?.stat, LEDGER_DECIMALS.chi2, sig(f.chi2Drop?.p), 'χ²')}</Cell>,
    },
    { id: 'pdrop', header: 'p(drop)', meta: { numeric: true }, cell: ({ row: { original: f } }) => <Cell onPress={show(f, 'drop')} label={`p of drop test for ${f.name}`}>{n(f.chi2Drop?.p, LEDGER_DECIMALS.p, sig(f.chi2Drop?.p), 'p')}</Cell> },
    {
      id: 'span',
      header: 'span α, % (t)',
      meta: { numeric: true, flex: 1.3 },
      cell: ({ row: { original: f } }) => (
        <Cell onPress={show(f, 'spanning')} label={`spanning check of ${f.name}`}>
          {f.spanning ? (
            <View style={{ flexDirection: 'row', gap: 4, justifyContent: 'flex-end' }}>
              {n(f.spanning.alpha * 100, LEDGER_DECIMALS.alphaPct, sig(f.spanning.p), 'α percent')}
              <Text style={styles.tInline}>({formatNum(f.spanning.t, 2)})</Text>
            </View>
          ) : (
            <Text style={[text.muted, { textAlign: 'right' }]}>{f.traded ? '—' : 'not traded'}</Text>
          )}
        </Cell>
      ),
    },
    {
      id: 'thin',
      header: 'thin β p',
      meta: { numeric: true },
      cell: ({ row: { original: f } }) => (
        <Cell onPress={show(f, 'thin')} label={`thin-beta test of ${f.name}`}>
          <Num value={f.thinBeta?.p} decimals={LEDGER_DECIMALS.p} marked={!!f.thinBeta?.flag} marker="◌" accessibilityLabel={`thin-beta p ${formatNum(f.thinBeta?.p, 3)}${f.thinBeta?.flag ? ', flagged' : ''}`} />
        </Cell>
      ),
    },
    {
      id: 'verdict',
      header: 'Verdict',
      meta: { width: 200 },
      cell: ({ row: { original: f } }) => (
        <Pressable onPress={show(f, 'verdict')} role="button" aria-label={`Verdict for ${f.name}: ${f.verdict}`}>
          <VerdictChip verdict={f.verdict} />
        </Pressable>
      ),
    },
  ];

  const card = (f: Factor) => (
    <View style={styles.card} aria-label={`Factor ${f.name}`}>
      <View style={styles.cardHead}>
        <View style={{ flex: 1 }}>
          <Text style={text.heading}>{f.name}</Text>
          <Text style={text.muted}>
            {f.traded ? 'traded' : 'not traded'}
            {f.thinBeta?.flag ? ' · ◌ thin-beta flag' : ''}
          </Text>
        </View>
        <Pressable onPress={show(f, 'verdict')} role="button" aria-label={`Verdict for ${f.name}: ${f.verdict}`}>
          <VerdictChip verdict={f.verdict} />
        </Pressable>
      </View>
      <CardLine label="b · needed?" onPress={show(f, 'b')} est={formatNum(f.b, 3)} t={f.tB} p={f.pB} marked={sig(f.pB)} />
      <CardLine label="λ, % · priced?" onPress={show(f, 'lambda')} est={formatNum(f.lambda * 100, 3)} t={f.tLambda} p={f.pLambda} marked={sig(f.pLambda)} />
      <CardLine label="drop χ²" onPress={show(f, 'drop')} est={formatNum(f.chi2Drop?.stat, 2)} p={f.chi2Drop?.p} marked={sig(f.chi2Drop?.p)} />
      {f.spanning ? (
        <CardLine label="spanning α, %" onPress={show(f, 'spanning')} est={formatNum(f.spanning.alpha * 100, 3)} t={f.spanning.t} p={f.spanning.p} marked={sig(f.spanning.p)} />
      ) : (
        <CardLine label="spanning" onPress={show(f, 'spanning')} est={f.traded ? '—' : 'not traded'} />
      )}
      <CardLine label="thin β" onPress={show(f, 'thin')} est={f.thinBeta ? (f.thinBeta.flag ? 'flagged ◌' : 'no flag') : '—'} p={f.thinBeta?.p} marked={false} />
    </View>
  );

  return (
    <View style={{ gap: space.sm }}>
      {wide ? (
        <Text style={text.muted}>
          Bold with * : significant at {level}. λ and α in % per period. Tap any number for what the test asks.
        </Text>
      ) : (
        <Text style={text.muted}>Bold with * : significant at {level}. Tap a line for what the test asks.</Text>
      )}
      <DataTable label="Factor ledger" data={result.factors} columns={columns} renderCard={card} getRowId={(f) => f.name} pageSize={100} />
      <LedgerDetailModal factor={open?.f ?? null} test={open?.test ?? null} level={level} onClose={() => setOpen(null)} />
    </View>
  );
}

function CardLine({ label, est, t, p, marked, onPress }: { label: string; est: string; t?: number; p?: number | null; marked?: boolean; onPress: () => void }) {
  return (
    <Pressable onPress={onPress} role="button" aria-label={`${label}: ${est}${p !== undefined && p !== null ? `, p ${formatNum(p, 3)}` : ''}`} style={styles.line}>
      <Text style={[text.body, { flex: 1 }]}>{label}</Text>
      <Text style={[styles.lineNum, marked && styles.marked]}>
        {est}
        {marked ? '*' : ' '}
      </Text>
      <Text style={[styles.lineSmall]}>{t !== undefined ? `t ${formatNum(t, 2)}` : ''}</Text>
      <Text style={[styles.lineSmall, marked && styles.marked]}>{p !== undefined && p !== null ? `p ${formatNum(p, 3)}` : ''}</Text>
    </Pressable>
  );
}

/** The joint drop test for the chosen set, shown below the ledger. */
export function JointDropCard({ result }: { result: LedgerResult }) {
  const j = result.jointDrop;
  if (!j) return null;
  const level = result.options.level;
  const lines: [string, { stat: number; df: number; p: number } | null][] = [
    ['Wald test on b (jointly zero)', j.wald],
    ['χ² drop test (common weighting)', j.chi2Drop],
    ['Joint spanning check', result.jointSpanning ? { stat: result.jointSpanning.stat, df: result.jointSpanning.df, p: result.jointSpanning.p } : null],
  ];
  return (
    <View style={styles.joint} aria-label="Joint drop test">
      <Text style={text.strong}>Joint test for {j.factors.join(', ')}</Text>
      {lines.map(([label, v]) => (
        <View key={label} style={styles.line}>
          <Text style={[text.body, { flex: 1 }]}>{label}</Text>
          {v ? (
            <>
              <Text style={[styles.lineNum, v.p < level && styles.marked]}>χ² {formatNum(v.stat, 2)}</Text>
              <Text style={styles.lineSmall}>df {v.df}</Text>
              <Text style={[styles.lineSmall, v.p < level && styles.marked]}>p {formatNum(v.p, 3)}{v.p < level ? '*' : ''}</Text>
            </>
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
  flag: { fontFamily: fonts.text, fontSize: 12, color: colors.slate },
  tInline: { fontFamily: fonts.mono, fontSize: 12, color: colors.slate },
  card: { backgroundColor: colors.card, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md, padding: space.md, gap: 2 },
  cardHead: { flexDirection: 'row', alignItems: 'flex-start', gap: space.sm, marginBottom: space.xs },
  line: { flexDirection: 'row', alignItems: 'center', gap: space.sm, minHeight: 36, borderTopWidth: 1, borderTopColor: colors.rule },
  lineNum: { fontFamily: fonts.mono, fontSize: 15, color: colors.ink, textAlign: 'right', minWidth: 72 },
  lineSmall: { fontFamily: fonts.mono, fontSize: 12, color: colors.slate, textAlign: 'right', minWidth: 58 },
  marked: { fontFamily: fonts.monoStrong, color: colors.ink },
  joint: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md, padding: space.md, gap: 2, backgroundColor: colors.card },
});
