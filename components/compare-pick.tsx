import { Pressable, StyleSheet, Text, View, type ViewStyle } from 'react-native';
import { router } from 'expo-router';
import { useRuns } from '../hooks/use-runs';
import type { Run } from '../shared/runs';
import { Button } from './button';
import { formatWhen } from './format';
import { colors, fonts, radius, space, text } from './theme';

/** Adds or removes a run from a pick of at most two (a third pick replaces the older one). */
export function togglePick(picked: readonly number[], id: number): number[] {
  if (picked.includes(id)) return picked.filter((x) => x !== id);
  return picked.length < 2 ? [...picked, id] : [picked[1], id];
}

export function openCompare(a: number, b: number): void {
  router.push({ pathname: '/runs/compare', params: { a: String(a), b: String(b) } });
}

/** Checkbox that picks one run for compare; only finished runs have a ledger to compare. */
export function PickBox({ runId, checked, finished, onToggle, withText }: { runId: number; checked: boolean; finished: boolean; onToggle: () => void; withText?: boolean }) {
  return (
    <Pressable
      role="checkbox"
      aria-checked={checked}
      aria-disabled={!finished || undefined}
      disabled={!finished}
      aria-label={finished ? `Pick run ${runId} to compare` : `Run ${runId} has not finished; it cannot be compared`}
      onPress={onToggle}
      style={[styles.pick, !finished && { opacity: 0.4 }]}
      hitSlop={8}
    >
      <View style={[styles.box, checked && styles.boxOn]}>{checked ? <Text style={styles.tick}>{'\u2713'}</Text> : null}</View>
      {withText ? <Text style={text.body}>{checked ? 'Picked to compare' : 'Pick to compare'}</Text> : null}
    </Pressable>
  );
}

/** Bar that follows the bottom of the screen while runs are picked: "Compare #a with #b". */
export function CompareBar({ picked, onClear }: { picked: readonly number[]; onClear: () => void }) {
  if (picked.length === 0) return null;
  const [a, b] = picked;
  return (
    <View role="region" aria-label="Runs picked to compare" style={styles.bar}>
      <Text style={[text.strong, { flexShrink: 1 }]}>
        {picked.length === 1 ? `Run #${a} picked: pick one more finished run` : `Runs #${a} and #${b} picked`}
      </Text>
      <View style={{ flexDirection: 'row', gap: space.sm }}>
        <Button label="Clear" variant="quiet" compact onPress={onClear} />
        <Button
          label="Compare"
          accessibilityLabel={picked.length === 2 ? `Compare runs ${a} and ${b}` : 'Compare (pick two runs)'}
          variant="primary"
          compact
          disabled={picked.length !== 2}
          onPress={() => openCompare(a, b!)}
        />
      </View>
    </View>
  );
}

/** "Compare with…": the other finished runs on the same library edition, one tap each. */
export function CompareWithPicker({ run }: { run: Run }) {
  const q = useRuns({ editionId: run.editionId, status: 'finished' });
  const others = (q.data ?? []).filter((r) => r.id !== run.id);
  if (q.isPending) return <Text style={text.muted}>Loading runs on this edition…</Text>;
  if (q.isError) return <Text style={text.muted}>The runs on this edition could not be loaded; type a run number below.</Text>;
  if (others.length === 0)
    return <Text style={text.muted}>No other finished run on {run.libraryName}, edition {run.editionNumber} yet. A run on another edition can still be compared by its number below.</Text>;
  return (
    <View role="list" aria-label="Runs on the same edition" style={{ gap: space.xs }}>
      {others.slice(0, 12).map((o) => (
        <View role="listitem" key={o.id} style={styles.other}>
          <View style={{ flex: 1, minWidth: 0 }}>
            <Text style={text.strong} numberOfLines={1}>
              #{o.id} {o.specName ?? '(unsaved spec)'}
            </Text>
            <Text style={text.muted} numberOfLines={2}>
              {o.factors.join(', ')} · {o.authorName} · {formatWhen(o.createdAt)}
            </Text>
          </View>
          <Button label="Compare" accessibilityLabel={`Compare with run ${o.id}`} compact onPress={() => openCompare(run.id, o.id)} />
        </View>
      ))}
      {others.length > 12 ? <Text style={text.muted}>{others.length - 12} more on this edition: pick them from the runs list.</Text> : null}
    </View>
  );
}

const styles = StyleSheet.create({
  pick: { flexDirection: 'row', alignItems: 'center', gap: space.sm, minHeight: 32 },
  box: { width: 22, height: 22, borderRadius: 4, borderWidth: 2, borderColor: colors.slate, alignItems: 'center', justifyContent: 'center', backgroundColor: colors.card },
  boxOn: { borderColor: colors.brass, backgroundColor: colors.brass },
  tick: { color: colors.card, fontFamily: fonts.textStrong, fontSize: 14, lineHeight: 16 },
  bar: {
    position: 'sticky' as ViewStyle['position'],
    bottom: 0,
    zIndex: 3,
    flexDirection: 'row',
    flexWrap: 'wrap',
    alignItems: 'center',
    justifyContent: 'space-between',
    gap: space.sm,
    padding: space.md,
    borderWidth: 1,
    borderColor: colors.brass,
    borderRadius: radius.md,
    backgroundColor: colors.brassTint,
  },
  other: { flexDirection: 'row', alignItems: 'center', gap: space.md, paddingVertical: space.xs, borderBottomWidth: 1, borderBottomColor: colors.rule },
});
