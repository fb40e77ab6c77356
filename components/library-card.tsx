import { Pressable, StyleSheet, Text, View } from 'react-native';
import { useRouter } from 'expo-router';
import type { LibrarySummary } from '../shared/libraries';
import { Chip } from './chip';
import { colors, fonts, radius, space, text } from './theme';

/** Visibility, frequency and archive state as chips (words + shape, never colour alone). */
export function LibraryChips({ lib }: { lib: Pick<LibrarySummary, 'visibility' | 'frequency' | 'archived'> }) {
  return (
    <View style={styles.chips}>
      <Chip label={lib.visibility === 'shared' ? 'shared' : 'private'} tone={lib.visibility === 'shared' ? 'kelp' : 'slate'} shape={lib.visibility === 'shared' ? 'filled' : 'outlined'} />
      {lib.frequency ? <Chip label={lib.frequency} tone="brass" shape="outlined" /> : null}
      {lib.archived ? <Chip label="archived" tone="fog" shape="dashed" /> : null}
    </View>
  );
}

/**
 * One library in the list: name, chips, date range, editions, series, owner. Opens the library's page,
 * or with `onSelect` (wide list beside its detail) shows it in the detail pane.
 */
export function LibraryCard({ lib, onSelect, selected }: { lib: LibrarySummary; onSelect?: () => void; selected?: boolean }) {
  const router = useRouter();
  return (
    <Pressable
      role={onSelect ? 'button' : 'link'}
      aria-label={onSelect ? `Show library ${lib.name}` : `Open library ${lib.name}`}
      aria-pressed={onSelect ? !!selected : undefined}
      onPress={onSelect ?? (() => router.push(`/libraries/${lib.id}`))}
      style={(state) => [
        styles.card,
        ((state as { hovered?: boolean }).hovered || (state as { focused?: boolean }).focused) && styles.hover,
        selected && styles.selected,
      ]}
    >
      <Text style={text.heading} numberOfLines={2}>
        {lib.name}
      </Text>
      <LibraryChips lib={lib} />
      <Text style={styles.mono}>
        {lib.firstDate ?? '—'} – {lib.lastDate ?? '—'}
      </Text>
      {lib.description ? (
        <Text style={text.body} numberOfLines={2}>
          {lib.description}
        </Text>
      ) : null}
      <Text style={text.muted}>
        {lib.seriesCount} series · latest edition {lib.latestEdition ?? '—'} ({lib.editionCount} kept) · {lib.owner ? `by ${lib.owner.name}` : 'no owner'}
      </Text>
    </Pressable>
  );
}

const styles = StyleSheet.create({
  card: { gap: space.xs, padding: space.lg, backgroundColor: colors.card, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md },
  hover: { borderColor: colors.brass },
  selected: { borderColor: colors.brass, borderLeftWidth: 4, backgroundColor: colors.brassTint },
  chips: { flexDirection: 'row', flexWrap: 'wrap', gap: space.xs },
  mono: { fontFamily: fonts.mono, fontSize: 14, color: colors.ink, fontVariant: ['tabular-nums'] },
});
