import { useMemo, useState } from 'react';
import { StyleSheet, Text, View } from 'react-native';
import type { ConfirmUploadBody, SeriesKind, Upload, Units, Visibility } from '../shared/libraries';
import { Button } from './button';
import { Card } from './card';
import { Chip } from './chip';
import { ErrorView } from './error-view';
import { LibraryStats } from './library-stats';
import { Select } from './select';
import { TextField } from './text-field';
import { colors, fonts, radius, space, text } from './theme';

type Choice = { include: boolean; kind: SeriesKind; traded: boolean };

export interface LibraryReviewProps {
  upload: Upload;
  /** Set when the upload becomes a new edition of an existing library. */
  target?: { id: number; name: string; visibility: Visibility };
  canShare: boolean;
  busy?: boolean;
  error?: unknown;
  onConfirm: (body: ConfirmUploadBody) => void;
  onDiscard: () => void;
}

const KIND_OPTIONS = [
  { value: 'asset', label: 'Test asset' },
  { value: 'factor', label: 'Factor' },
  { value: 'rf', label: 'Risk-free' },
] as const;

/** Review of a parsed upload: summary, warnings, units, per-series kind pickers, then confirm. */
export function LibraryReview({ upload, target, canShare, busy, error, onConfirm, onDiscard }: LibraryReviewProps) {
  const [units, setUnits] = useState<Units>(upload.units);
  const [name, setName] = useState(upload.fileName.replace(/\.(csv|txt)$/i, ''));
  const [visibility, setVisibility] = useState<Visibility>('private');
  const [choices, setChoices] = useState<Record<string, Choice>>(() =>
    Object.fromEntries(upload.series.map((s) => [s.name, { include: true, kind: s.suggestedKind, traded: s.suggestedTraded }])),
  );
  const set = (col: string, patch: Partial<Choice>) => setChoices((c) => ({ ...c, [col]: { ...c[col]!, ...patch } }));
  const warningsByColumn = useMemo(() => {
    const m = new Map<string, string[]>();
    for (const w of upload.warnings) if (w.column) m.set(w.column, [...(m.get(w.column) ?? []), w.message]);
    return m;
  }, [upload.warnings]);
  const included = upload.series.filter((s) => choices[s.name]!.include);
  const rfCount = included.filter((s) => choices[s.name]!.kind === 'rf').length;
  const newSeries = new Set(upload.target?.newSeries ?? []);
  const factorCount = included.filter((s) => choices[s.name]!.kind === 'factor').length;
  const problem = included.length === 0 ? 'Keep at least one series.' : rfCount > 1 ? 'Mark at most one series as risk-free.' : !target && !name.trim() ? 'Give the library a name.' : null;

  const submit = () => {
    const series = included.map((s) => {
      const c = choices[s.name]!;
      return { name: s.name, kind: c.kind, ...(c.kind === 'factor' ? { traded: c.traded } : {}) };
    });
    onConfirm(target ? { libraryId: target.id, units, series } : { name: name.trim(), visibility, units, series });
  };

  const generalWarnings = upload.warnings.filter((w) => !w.column);
  return (
    <View style={{ gap: space.lg }}>
      <Card title="What Keelson read" subtitle={upload.fileName} accessibilityLabel="Upload summary">
        <View style={styles.facts}>
          <Fact label="Frequency" value={upload.frequency} />
          <Fact label="Dates" value={`${upload.firstDate} – ${upload.lastDate}`} />
          <Fact label="Rows" value={String(upload.rows)} />
          <Fact label="Series" value={String(upload.columns.length)} />
          <Fact label="Units detected" value={upload.units} />
        </View>
        {generalWarnings.map((w, i) => (
          <Text key={i} style={styles.warn}>
            {'\u25B3 '}
            {w.message}
          </Text>
        ))}
        <Text style={text.muted}>Nothing is saved until you confirm. This upload is kept for a day.</Text>
      </Card>

      {upload.target ? (
        <Card
          title={upload.target.edition !== null ? `Compared with edition ${upload.target.edition}` : `New edition of ${upload.target.libraryName}`}
          accessibilityLabel="Compared with the latest edition"
        >
          {upload.target.edition !== null ? (
            <>
              <Text style={text.body}>
                Kinds and traded flags of the {upload.series.length - upload.target.newSeries.length} series found in edition {upload.target.edition} of {upload.target.libraryName} are kept;
                check the series marked new.
              </Text>
              <Text style={text.body} aria-label="New series">
                <Text style={text.strong}>New in this file: </Text>
                {upload.target.newSeries.length ? upload.target.newSeries.join(', ') : 'none'}
              </Text>
              <Text style={text.body} aria-label="Gone series">
                <Text style={text.strong}>Not in this file (gone): </Text>
                {upload.target.goneSeries.length ? `${upload.target.goneSeries.join(', ')} — earlier editions keep them, and so do runs that used them` : 'none'}
              </Text>
            </>
          ) : (
            <Text style={text.body}>The library has no edition left to compare with; kinds are suggested from names.</Text>
          )}
        </Card>
      ) : null}

      <Card title="Units" subtitle="Keelson stores decimals (0.01 = 1%). Percent files are divided by 100 on saving.">
        <Select<Units>
          label="Values in the file are"
          value={units}
          onChange={setUnits}
          options={[
            { value: 'decimal', label: 'Decimals (0.01 = 1%)' },
            { value: 'percent', label: 'Percent (1 = 1%)' },
          ]}
        />
        {units !== upload.units ? (
          <Text style={styles.warn}>
            {'\u25B3 '}Keelson read these values as {upload.units}; you chose {units}. Check a mean below before confirming.
          </Text>
        ) : null}
      </Card>

      <Card title="Series" subtitle={`${included.length} of ${upload.series.length} kept. Stats are in the file's units; sd uses divisor T.`}>
        <View style={{ gap: space.sm, flexDirection: 'row', flexWrap: 'wrap' }}>
          {upload.series.map((s) => {
            const c = choices[s.name]!;
            const warns = warningsByColumn.get(s.name) ?? [];
            return (
              <View key={s.name} style={[styles.series, !c.include && { opacity: 0.55 }]} role="group" aria-label={`Series ${s.name}`}>
                <View style={styles.seriesHead}>
                  <Text style={[text.strong, { flexShrink: 1 }]}>{s.name}</Text>
                  {newSeries.has(s.name) ? <Chip label="new" tone="brass" shape="outlined" accessibilityLabel={`${s.name} is new in this edition`} /> : null}
                  {warns.length ? <Chip label={`${warns.length} flag${warns.length > 1 ? 's' : ''}`} tone="rust" shape="dashed" /> : null}
                  <View style={{ flex: 1 }} />
                  <Button
                    compact
                    variant="quiet"
                    label={c.include ? 'Leave out' : 'Keep'}
                    accessibilityLabel={`${c.include ? 'Leave out' : 'Keep'} ${s.name}`}
                    onPress={() => set(s.name, { include: !c.include })}
                  />
                </View>
                <LibraryStats stats={s.stats} />
                {warns.map((w, i) => (
                  <Text key={i} style={styles.warn}>
                    {'\u25B3 '}
                    {w}
                  </Text>
                ))}
                {s.suggestion.reason ? (
                  <Text style={text.muted} aria-label={`Why ${s.name} is suggested as it is`}>
                    {s.suggestion.reason}
                    {c.kind !== s.suggestedKind || (c.kind === 'factor' && c.traded !== s.suggestedTraded) ? ' · you changed this' : ''}
                  </Text>
                ) : null}
                {c.include ? (
                  <View style={styles.pickers}>
                    <Select<SeriesKind> label={`Kind of ${s.name}`} hideLabel value={c.kind} options={KIND_OPTIONS} onChange={(kind) => set(s.name, { kind })} />
                    {c.kind === 'factor' ? (
                      <Select<'yes' | 'no'>
                        label={`Is ${s.name} traded`}
                        hideLabel
                        value={c.traded ? 'yes' : 'no'}
                        onChange={(v) => set(s.name, { traded: v === 'yes' })}
                        options={[
                          { value: 'yes', label: 'Traded' },
                          { value: 'no', label: 'Not traded' },
                        ]}
                      />
                    ) : null}
                  </View>
                ) : null}
              </View>
            );
          })}
        </View>
      </Card>

      <Card title={target ? `New edition of ${target.name}` : 'Save as a new library'}>
        {target ? (
          <Text style={text.body}>
            Confirming adds the next edition to {target.name} ({target.visibility}). Earlier editions stay readable, and runs keep the edition they used.
          </Text>
        ) : (
          <View style={{ gap: space.md }}>
            <TextField label="Library name" value={name} onChangeText={setName} maxLength={120} />
            <Select<Visibility>
              label="Who can read it"
              value={visibility}
              onChange={setVisibility}
              options={
                canShare
                  ? [
                      { value: 'private', label: 'Only me (private)' },
                      { value: 'shared', label: 'The whole team (shared)' },
                    ]
                  : [{ value: 'private', label: 'Only me (private)' }]
              }
            />
            {!canShare ? <Text style={text.muted}>Admins share libraries with the team; ask one to share it once it is saved.</Text> : null}
          </View>
        )}
        {error ? <ErrorView error={error} title="Not saved" /> : null}
        {problem ? <Text style={styles.warn}>{problem}</Text> : null}
        {!problem && factorCount === 0 ? (
          <Text style={styles.warn}>{'\u25B3 '}No series is marked as a factor: runs on this edition need at least one. Choose the factors above, or confirm if that is intended.</Text>
        ) : null}
        <View style={styles.buttons}>
          <Button variant="primary" label={target ? 'Confirm new edition' : 'Confirm and save'} onPress={submit} busy={busy} disabled={!!problem} />
          <Button variant="quiet" label="Discard upload" onPress={onDiscard} disabled={busy} />
        </View>
      </Card>
    </View>
  );
}

function Fact({ label, value }: { label: string; value: string }) {
  return (
    <View style={styles.fact}>
      <Text style={text.muted}>{label}</Text>
      <Text style={[text.strong, { fontFamily: fonts.mono }]}>{value}</Text>
    </View>
  );
}

const styles = StyleSheet.create({
  facts: { flexDirection: 'row', flexWrap: 'wrap', gap: space.lg },
  fact: { minWidth: 110, gap: 2 },
  warn: { fontFamily: fonts.text, fontSize: 14, color: colors.rust, lineHeight: 20 },
  series: { flexGrow: 1, flexBasis: 400, minWidth: 0, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.sm, padding: space.md, gap: space.sm, backgroundColor: colors.card },
  seriesHead: { flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' },
  pickers: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md },
  buttons: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, marginTop: space.sm },
});
