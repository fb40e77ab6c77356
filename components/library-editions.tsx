import { useState } from 'react';
import { Platform, StyleSheet, Text, View } from 'react-native';
import type { EditionSummary } from '../shared/libraries';
import { exportUrl } from '../api/libraries';
import { Button } from './button';
import { Chip } from './chip';
import { formatWhen } from './format';
import { colors, fonts, radius, space, text } from './theme';

export interface LibraryEditionsProps {
  libraryId: number;
  editions: readonly EditionSummary[];
  selected: number | undefined;
  canDelete: boolean;
  deleting?: number;
  onSelect: (n: number) => void;
  onDelete: (n: number) => void;
}

/** A same-origin download link styled as a button (web); the session cookie authorises it. */
export function DownloadLink({ href, label, name }: { href: string; label: string; name: string }) {
  if (Platform.OS !== 'web') return <Text style={text.muted}>Download from the web app.</Text>;
  return (
    <a
      href={href}
      download
      aria-label={name}
      style={{
        display: 'inline-flex',
        alignItems: 'center',
        minHeight: 36,
        padding: `0 ${space.md}px`,
        border: `1px solid ${colors.ink}`,
        borderRadius: radius.sm,
        color: colors.ink,
        background: colors.card,
        fontFamily: fonts.textStrong,
        fontSize: 14,
        textDecoration: 'none',
      }}
    >
      {label}
    </a>
  );
}

/** Edition history: newest first, with view, download and (admins, unused editions) delete. */
export function LibraryEditions({ libraryId, editions, selected, canDelete, deleting, onSelect, onDelete }: LibraryEditionsProps) {
  const [asking, setAsking] = useState<number | null>(null);
  return (
    <View role="list" aria-label="Editions" style={{ gap: space.sm }}>
      {editions.map((e) => {
        const on = e.number === selected;
        const deletable = canDelete && !e.used && editions.length > 1;
        return (
          <View role="listitem" key={e.id} style={[styles.item, on && styles.on]} aria-label={`Edition ${e.number}`}>
            <View style={styles.head}>
              <Text style={text.strong}>Edition {e.number}</Text>
              {on ? <Chip label="showing" tone="brass" shape="filled" /> : null}
              {e.used ? <Chip label="used by a run" tone="kelp" shape="outlined" /> : null}
            </View>
            <Text style={styles.mono}>
              {e.firstDate} – {e.lastDate} · {e.rows} rows · {e.seriesCount} series · {e.frequency}
            </Text>
            <Text style={text.muted}>
              {e.fileName || 'upload'} ({e.sourceUnits}) · {e.createdBy?.name ?? 'unknown'} · {formatWhen(e.createdAt)}
            </Text>
            <View style={styles.actions}>
              {!on ? <Button compact label="Show" accessibilityLabel={`Show edition ${e.number}`} onPress={() => onSelect(e.number)} /> : null}
              <DownloadLink href={exportUrl(libraryId, e.number)} label="Download CSV" name={`Download edition ${e.number} as CSV`} />
              {deletable && asking !== e.number ? (
                <Button compact variant="danger" label="Delete" accessibilityLabel={`Delete edition ${e.number}`} onPress={() => setAsking(e.number)} />
              ) : null}
            </View>
            {asking === e.number ? (
              <View style={styles.confirm} role="alert">
                <Text style={text.body}>Delete edition {e.number} for good? No run uses it; the other editions stay.</Text>
                <View style={styles.actions}>
                  <Button
                    compact
                    variant="danger"
                    label={`Yes, delete edition ${e.number}`}
                    busy={deleting === e.number}
                    onPress={() => {
                      onDelete(e.number);
                      setAsking(null);
                    }}
                  />
                  <Button compact variant="quiet" label="Keep it" onPress={() => setAsking(null)} />
                </View>
              </View>
            ) : null}
          </View>
        );
      })}
    </View>
  );
}

const styles = StyleSheet.create({
  item: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.sm, padding: space.md, gap: space.xs, backgroundColor: colors.card },
  on: { borderColor: colors.brass },
  head: { flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' },
  mono: { fontFamily: fonts.mono, fontSize: 13, color: colors.ink, fontVariant: ['tabular-nums'] },
  actions: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, alignItems: 'center', marginTop: space.xs },
  confirm: { gap: space.sm, padding: space.sm, backgroundColor: '#F7E9E5', borderRadius: radius.sm },
});
