import { StyleSheet, Text, View } from 'react-native';
import type { SeriesStats } from '../shared/libraries';
import { formatNum } from './num';
import { colors, fonts, space, text } from './theme';

/** Compact stats block of one series: count, missing, mean, sd, min, max (fixed decimals, tabular figures). */
export function LibraryStats({ stats, decimals = 4 }: { stats: SeriesStats; decimals?: number }) {
  const cells: [string, string][] = [
    ['n', String(stats.count)],
    ['missing', String(stats.missing)],
    ['mean', formatNum(stats.mean, decimals)],
    ['sd', formatNum(stats.sd, decimals)],
    ['min', formatNum(stats.min, decimals)],
    ['max', formatNum(stats.max, decimals)],
  ];
  return (
    <View style={styles.row}>
      {cells.map(([k, v]) => (
        <View key={k} style={styles.cell}>
          <Text style={text.muted}>{k}</Text>
          <Text style={styles.num}>{v}</Text>
        </View>
      ))}
    </View>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', flexWrap: 'wrap', columnGap: space.md, rowGap: space.xs },
  cell: { minWidth: 54, alignItems: 'flex-end' },
  num: { fontFamily: fonts.mono, fontSize: 13, color: colors.ink, fontVariant: ['tabular-nums'] },
});
