/**
 * The factor ledger: per factor b (needed?) beside λ (priced?), the drop test, the spanning
 * check, the thin-beta flag and the verdict. Wide: a table (sticky header, verdict last); phone:
 * one card per factor. One tap on a cell opens what the test asks and the numbers behind it.
 */
import { useState, type ReactNode } from 'react';
import { Pressable, ScrollView, StyleSheet, Text, View, type ViewStyle } from 'react-native';
import type { LedgerResult } from '../shared/runs';
import { useIsWide } from '../hooks/use-layout';
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
    <Num value={v} decimals={d} marked={marked} style={{ fontSize: 14 }} accessibilityLabel={`${label} ${formatNum(v, d)}${marked ? ', significant' : ''}`} />
  );

  const est = (v: number | null | undefined, d: number, t: number | null | undefined, marked: boolean, label: string) => (
    <View style={styles.estWrap}>
      <Text style={[styles.num, marked && styles.marked]} aria-label={`${label} ${formatNum(v, d)}${marked ? ', significant' : ''}`}>
        {formatNum(v, d)}
        {marked ? '*' : ' '}
      </Text>
      {t !== undefined ? <Text style={[styles.tInline, marked && styles.tMarked]}>({formatNum(t, 2)})</Text> : null}
    </View>
  );
  const cols: { key: string; title: string; w: number; render: (f: Factor) => ReactNode }[] = [
    { key: 'b', title: 'b (t)', w: 128, render: (f) => <Cell onPress={show(f, 'b')} label={`b of ${f.name}: what the test asks`}>{est(f.b, LEDGER_DECIMALS.b, f.tB, sig(f.pB), 'b')}</Cell> },
    { key: 'pb', title: 'p(b)', w: 66, render: (f) => <Cell onPress={show(f, 'b')} label={`p of b for ${f.name}`}>{n(f.pB, LEDGER_DECIMALS.p, sig(f.pB), 'p')}</Cell> },
    { key: 'l', title: 'λ, % (t)', w: 118, render: (f) => <Cell onPress={show(f, 'lambda')} label={`λ of ${f.name}: what the test asks`}>{est(f.lambda * 100, LEDGER_DECIMALS.lambdaPct, f.tLambda, sig(f.pLambda), 'λ percent')}</Cell> },
    { key: 'pl', title: 'p(λ)', w: 66, render: (f) => <Cell onPress={show(f, 'lambda')} label={`p of λ for ${f.name}`}>{n(f.pLambda, LEDGER_DECIMALS.p, sig(f.pLambda), 'p')}</Cell> },
    { key: 'd', title: 'drop χ²', w: 64, render: (f) => <Cell onPress={show(f, 'drop')} label={`drop test of ${f.name}`}>{n(f.chi2Drop?.stat, LEDGER_DECIMALS.chi2, sig(f.chi2Drop?.p), 'χ²')}</Cell> },
    { key: 'pd', title: 'p(drop)', w: 66, render: (f) => <Cell onPress={show(f, 'drop')} label={`p of drop test for ${f.name}`}>{n(f.chi2Drop?.p, LEDGER_DECIMALS.p, sig(f.chi2Drop?.p), 'p')}</Cell> },
    {
      key: 's',
      title: 'span α, % (t)',
      w: 116,
      render: (f) => (
        <Cell onPress={show(f, 'spanning')} label={`spanning check of ${f.name}`}>
          {f.spanning ? est(f.spanning.alpha * 100, LEDGER_DECIMALS.alphaPct, f.spanning.t, sig(f.spanning.p), 'α percent') : <Text style={[text.muted, { textAlign: 'right' }]}>{f.traded ? '—' : 'not traded'}</Text>}
        </Cell>
      ),
    },
    {
      key: 'th',
      title: 'thin β p',
      w: 60,
      render: (f) => (
        <Cell onPress={show(f, 'thin')} label={`thin-beta test of ${f.name}`}>
          <Num value={f.thinBeta?.p} decimals={LEDGER_DECIMALS.p} marked={!!f.thinBeta?.flag} marker="◌" accessibilityLabel={`thin-beta p ${formatNum(f.thinBeta?.p, 3)}${f.thinBeta?.flag ? ', flagged' : ''}`} />
        </Cell>
      ),
    },
  ];
  const [tableW, setTableW] = useState(0);
  const MIN_W = 88 + cols.reduce((a, c) => a + c.w, 0) + 184;
  const tableBody = (
    <View role="table" aria-label="Factor ledger" style={[styles.table, { minWidth: MIN_W }]}>
      <View role="row" style={[styles.tr, styles.thead]}>
        <Text role="columnheader" style={[styles.th, { flex: 1, minWidth: 88, textAlign: 'left' }]}>Factor</Text>
        {cols.map((c) => (
          <Text key={c.key} role="columnheader" style={[styles.th, { width: c.w }]}>
            {c.title}
          </Text>
        ))}
        <Text role="columnheader" style={[styles.th, { width: 184, textAlign: 'left' }]}>Verdict</Text>
      </View>
      {result.factors.map((f) => (
        <View key={f.name} role="row" style={styles.tr}>
          <View role="rowheader" style={[styles.td, { flex: 1, minWidth: 88 }]}>
            <Text style={text.strong}>{f.name}</Text>
            {!f.traded ? <Text style={text.muted}>not traded</Text> : null}
            {f.thinBeta?.flag ? <Text style={styles.flag}>◌ thin β</Text> : null}
          </View>
          {cols.map((c) => (
            <View key={c.key} role="cell" style={[styles.td, { width: c.w }]}>
              {c.render(f)}
            </View>
          ))}
          <View role="cell" style={[styles.td, { width: 184 }]}>
            <Pressable onPress={show(f, 'verdict')} role="button" aria-label={`Verdict for ${f.name}: ${f.verdict}`}>
              <VerdictChip verdict={f.verdict} />
            </Pressable>
          </View>
        </View>
      ))}
    </View>
  );

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
      {wide ? (
        <View onLayout={(e) => setTableW(e.nativeEvent.layout.width)}>
          {tableW > 0 && tableW < MIN_W ? (
            <ScrollView horizontal contentContainerStyle={{ minWidth: MIN_W }}>
              {tableBody}
            </ScrollView>
          ) : (
            tableBody
          )}
        </View>
      ) : (
        <View role="list" aria-label="Factor ledger" style={{ gap: space.sm }}>
          {result.factors.map((f) => (
            <View role="listitem" key={f.name}>
              {card(f)}
            </View>
          ))}
        </View>
      )}
      <LedgerDetailModal factor={open?.f ?? null} test={open?.test ?? null} level={level} onClose={() => setOpen(null)} />
    </View>
  );
}

function CardLine({ label, est, t, p, marked, onPress }: { label: string; est: string; t?: number; p?: number | null; marked?: boolean; onPress: () => void }) {
  return (
    <Pressable onPress={onPress} role="button" aria-label={`${label}: ${est}${p !== undefined && p !== null ? `, p ${formatNum(p, 3)}` : ''}`} style={styles.line}>
      <Text style={[text.body, { flex: 1, fontSize: 14 }]}>{label}</Text>
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
  tInline: { fontFamily: fonts.mono, fontSize: 11, color: colors.slate, minWidth: 48, textAlign: 'right' },
  tMarked: { fontFamily: fonts.monoStrong, color: colors.ink },
  estWrap: { flexDirection: 'row', alignItems: 'baseline', justifyContent: 'flex-end', gap: 2 },
  num: { fontFamily: fonts.mono, fontSize: 14, color: colors.ink, textAlign: 'right', fontVariant: ['tabular-nums'] },
  table: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md, backgroundColor: colors.card },
  thead: { position: 'sticky' as ViewStyle['position'], top: 0, zIndex: 1, backgroundColor: colors.paper, borderTopLeftRadius: radius.md, borderTopRightRadius: radius.md },
  tr: { flexDirection: 'row', alignItems: 'center', borderBottomWidth: 1, borderBottomColor: colors.rule },
  th: { fontFamily: fonts.textStrong, fontSize: 12, color: colors.slate, textAlign: 'right', paddingHorizontal: 6, paddingVertical: space.sm },
  td: { paddingHorizontal: 4, paddingVertical: 6, justifyContent: 'center' },
  card: { backgroundColor: colors.card, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md, padding: space.md, gap: 2 },
  cardHead: { flexDirection: 'row', alignItems: 'flex-start', gap: space.sm, marginBottom: space.xs },
  line: { flexDirection: 'row', alignItems: 'center', gap: 6, minHeight: 36, borderTopWidth: 1, borderTopColor: colors.rule },
  lineNum: { fontFamily: fonts.mono, fontSize: 15, color: colors.ink, textAlign: 'right', minWidth: 64 },
  lineSmall: { fontFamily: fonts.mono, fontSize: 12, color: colors.slate, textAlign: 'right', minWidth: 50 },
  marked: { fontFamily: fonts.monoStrong, color: colors.ink },
  joint: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md, padding: space.md, gap: 2, backgroundColor: colors.card },
});
