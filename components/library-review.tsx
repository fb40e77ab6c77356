import { memo, useCallback, useMemo, useState } from 'react';
import { FlatList, StyleSheet, Text, View } from 'react-native';
import { Controller, useForm, useWatch, type UseFormSetValue } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import {
  confirmUploadBodySchema,
  seriesKindSchema,
  unitsSchema,
  visibilitySchema,
  type ConfirmUploadBody,
  type SeriesKind,
  type Upload,
  type Visibility,
} from '../shared/libraries';
import { useServerErrors } from '../hooks/use-form-errors';
import { useIsWide } from '../hooks/use-layout';
import { Button } from './button';
import { Card } from './card';
import { Chip } from './chip';
import { ErrorView } from './error-view';
import { LibraryStats } from './library-stats';
import { Select } from './select';
import { TextField } from './text-field';
import { colors, fonts, radius, space, text } from './theme';

type Choice = { include: boolean; kind: SeriesKind; traded: boolean };

/**
 * The review form: the shared confirm body's rules (a name for a new library, at least one series)
 * plus what the review adds (at most one risk-free series), then turned into the confirm body and
 * checked by the shared schema itself.
 */
/** `libraryId`: the library the upload becomes the next edition of; unset for a new library. */
function reviewSchema(libraryId: number | undefined) {
  const newLibrary = libraryId === undefined;
  return z
    .object({
      name: z.string(),
      visibility: visibilitySchema,
      units: unitsSchema,
      series: z.array(z.object({ name: z.string(), include: z.boolean(), kind: seriesKindSchema, traded: z.boolean() })),
    })
    .superRefine((v, ctx) => {
      const kept = v.series.filter((s) => s.include);
      if (kept.length === 0) ctx.addIssue({ code: 'custom', path: ['series'], message: 'Keep at least one series.' });
      else if (kept.filter((s) => s.kind === 'rf').length > 1) ctx.addIssue({ code: 'custom', path: ['series'], message: 'Mark at most one series as risk-free.' });
      if (newLibrary && !v.name.trim()) ctx.addIssue({ code: 'custom', path: ['name'], message: 'Give the library a name.' });
    })
    .transform((v): ConfirmUploadBody => {
      const series = v.series.filter((s) => s.include).map((s) => ({ name: s.name, kind: s.kind, ...(s.kind === 'factor' ? { traded: s.traded } : {}) }));
      return { ...(newLibrary ? { name: v.name.trim(), visibility: v.visibility } : { libraryId }), units: v.units, series };
    })
    .pipe(confirmUploadBodySchema);
}
type ReviewInput = z.input<ReturnType<typeof reviewSchema>>;
const REVIEW_FIELDS = ['name', 'visibility', 'units', 'series'] as const;

export interface LibraryReviewProps {
  upload: Upload;
  /** Set when the upload becomes a new edition of an existing library. */
  target?: { id: number; name: string; visibility: Visibility };
  canShare: boolean;
  busy?: boolean;
  error?: unknown;
  /** Confirms; a rejection (KeelsonApiError) is shown on the fields its issues name. */
  onConfirm: (body: ConfirmUploadBody) => Promise<unknown>;
  onDiscard: () => void;
}

const KIND_OPTIONS = [
  { value: 'asset', label: 'Test asset' },
  { value: 'factor', label: 'Factor' },
  { value: 'rf', label: 'Risk-free' },
] as const;

/**
 * Review of a parsed upload: summary, warnings, units, per-series kind pickers, then confirm.
 * react-hook-form with the shared confirm schema; the series list is virtualised (FlatList), so a
 * file with thousands of series renders only the rows in view.
 */
export function LibraryReview({ upload, target, canShare, busy, error, onConfirm, onDiscard }: LibraryReviewProps) {
  const wide = useIsWide();
  const schema = useMemo(() => reviewSchema(target?.id), [target?.id]);
  const { control, handleSubmit, setValue, setError, formState } = useForm<ReviewInput, unknown, ConfirmUploadBody>({
    resolver: zodResolver(schema),
    defaultValues: {
      name: upload.fileName.replace(/\.(csv|txt)$/i, ''),
      visibility: 'private',
      units: upload.units,
      series: upload.series.map((s) => ({ name: s.name, include: true, kind: s.suggestedKind, traded: s.suggestedTraded })),
    },
    mode: 'onChange',
  });
  const server = useServerErrors(setError, REVIEW_FIELDS);
  const [filter, setFilter] = useState('');
  const units = useWatch({ control, name: 'units' });
  const name = useWatch({ control, name: 'name' });
  const choices = useWatch({ control, name: 'series' }) as Choice[];
  const warningsByColumn = useMemo(() => {
    const m = new Map<string, string[]>();
    for (const w of upload.warnings) if (w.column) m.set(w.column, [...(m.get(w.column) ?? []), w.message]);
    return m;
  }, [upload.warnings]);
  const newSeries = useMemo(() => new Set(upload.target?.newSeries ?? []), [upload.target]);
  let includedCount = 0;
  let rfCount = 0;
  let factorCount = 0;
  for (const c of choices) {
    if (!c.include) continue;
    includedCount += 1;
    if (c.kind === 'rf') rfCount += 1;
    if (c.kind === 'factor') factorCount += 1;
  }
  const problem =
    includedCount === 0 ? 'Keep at least one series.' : rfCount > 1 ? 'Mark at most one series as risk-free.' : !target && !name.trim() ? 'Give the library a name.' : null;
  const needle = filter.trim().toLowerCase();
  const rows = useMemo(
    () => upload.series.map((s, index) => ({ s, index })).filter((r) => !needle || r.s.name.toLowerCase().includes(needle)),
    [upload.series, needle],
  );

  const submit = handleSubmit((body) => {
    server.clear();
    return onConfirm(body).catch((err: unknown) => server.onServerError(err));
  });
  const seriesError = formState.errors.series?.type === 'server' ? formState.errors.series.message : undefined;
  const nameError = formState.errors.name?.type === 'server' ? formState.errors.name.message : undefined;

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
        <Controller
          control={control}
          name="units"
          render={({ field, fieldState }) => (
            <Select
              label="Values in the file are"
              value={field.value}
              onChange={field.onChange}
              error={fieldState.error?.message}
              options={[
                { value: 'decimal', label: 'Decimals (0.01 = 1%)' },
                { value: 'percent', label: 'Percent (1 = 1%)' },
              ]}
            />
          )}
        />
        {units !== upload.units ? (
          <Text style={styles.warn}>
            {'\u25B3 '}Keelson read these values as {upload.units}; you chose {units}. Check a mean below before confirming.
          </Text>
        ) : null}
      </Card>

      <Card title="Series" subtitle={`${includedCount} of ${upload.series.length} kept. Stats are in the file's units; sd uses divisor T.`}>
        {upload.series.length > 12 ? <TextField label="Filter series" value={filter} onChangeText={setFilter} placeholder="Type part of a name" /> : null}
        <FlatList
          key={wide ? 'two' : 'one'}
          accessibilityLabel="Series to review"
          data={rows}
          keyExtractor={(r) => r.s.name}
          numColumns={wide ? 2 : 1}
          columnWrapperStyle={wide ? { gap: space.sm } : undefined}
          contentContainerStyle={{ gap: space.sm }}
          style={upload.series.length > 12 ? { maxHeight: wide ? 720 : 520 } : undefined}
          initialNumToRender={40}
          maxToRenderPerBatch={20}
          windowSize={5}
          extraData={choices}
          renderItem={({ item }) => (
            <SeriesRow
              index={item.index}
              series={item.s}
              choice={choices[item.index]!}
              isNew={newSeries.has(item.s.name)}
              warnings={warningsByColumn.get(item.s.name)}
              setValue={setValue}
            />
          )}
          ListEmptyComponent={<Text style={text.muted}>No series name contains "{filter}".</Text>}
        />
        {seriesError ? <Text style={styles.warn}>{seriesError}</Text> : null}
      </Card>

      <Card title={target ? `New edition of ${target.name}` : 'Save as a new library'}>
        {target ? (
          <Text style={text.body}>
            Confirming adds the next edition to {target.name} ({target.visibility}). Earlier editions stay readable, and runs keep the edition they used.
          </Text>
        ) : (
          <View style={{ gap: space.md }}>
            <Controller
              control={control}
              name="name"
              render={({ field }) => <TextField label="Library name" value={field.value} onChangeText={field.onChange} onBlur={field.onBlur} maxLength={120} error={nameError} />}
            />
            <Controller
              control={control}
              name="visibility"
              render={({ field }) => (
            <Select<Visibility>
              label="Who can read it"
              value={field.value}
              onChange={field.onChange}
              options={
                canShare
                  ? [
                      { value: 'private', label: 'Only me (private)' },
                      { value: 'shared', label: 'The whole team (shared)' },
                    ]
                  : [{ value: 'private', label: 'Only me (private)' }]
              }
            />
              )}
            />
            {!canShare ? <Text style={text.muted}>Admins share libraries with the team; ask one to share it once it is saved.</Text> : null}
          </View>
        )}
        {server.general ? <ErrorView error={server.general} title="Not saved" /> : error ? <ErrorView error={error} title="Not saved" /> : null}
        {problem ? <Text style={styles.warn}>{problem}</Text> : null}
        {!problem && factorCount === 0 ? (
          <Text style={styles.warn}>{'\u25B3 '}No series is marked as a factor: runs on this edition need at least one. Choose the factors above, or confirm if that is intended.</Text>
        ) : null}
        <View style={styles.buttons}>
          <Button variant="primary" label={target ? 'Confirm new edition' : 'Confirm and save'} onPress={submit} busy={busy} disabled={!!problem || busy} />
          <Button variant="quiet" label="Discard upload" onPress={onDiscard} disabled={busy} />
        </View>
      </Card>
    </View>
  );
}

interface SeriesRowProps {
  index: number;
  series: Upload['series'][number];
  choice: Choice;
  isNew: boolean;
  warnings: string[] | undefined;
  setValue: UseFormSetValue<ReviewInput>;
}

/** One series of the review: name, flags, stats, and its kind (and traded) pickers. Re-renders only when its own choice changes. */
const SeriesRow = memo(function SeriesRow({ index, series: s, choice: c, isNew, warnings, setValue }: SeriesRowProps) {
  const set = useCallback(
    (patch: Partial<Choice>) => {
      for (const [k, v] of Object.entries(patch)) setValue(`series.${index}.${k as keyof Choice}`, v as never, { shouldValidate: true, shouldDirty: true });
    },
    [index, setValue],
  );
  const warns = warnings ?? [];
  return (
    <View style={[styles.series, !c.include && { opacity: 0.55 }]} role="group" aria-label={`Series ${s.name}`}>
      <View style={styles.seriesHead}>
        <Text style={[text.strong, { flexShrink: 1 }]}>{s.name}</Text>
        {isNew ? <Chip label="new" tone="brass" shape="outlined" accessibilityLabel={`${s.name} is new in this edition`} /> : null}
        {warns.length ? <Chip label={`${warns.length} flag${warns.length > 1 ? 's' : ''}`} tone="rust" shape="dashed" /> : null}
        <View style={{ flex: 1 }} />
        <Button
          compact
          variant="quiet"
          label={c.include ? 'Leave out' : 'Keep'}
          accessibilityLabel={`${c.include ? 'Leave out' : 'Keep'} ${s.name}`}
          onPress={() => set({ include: !c.include })}
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
          <Select<SeriesKind> label={`Kind of ${s.name}`} hideLabel value={c.kind} options={KIND_OPTIONS} onChange={(kind) => set({ kind })} />
          {c.kind === 'factor' ? (
            <Select<'yes' | 'no'>
              label={`Is ${s.name} traded`}
              hideLabel
              value={c.traded ? 'yes' : 'no'}
              onChange={(v) => set({ traded: v === 'yes' })}
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
});

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
  series: { flex: 1, minWidth: 0, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.sm, padding: space.md, gap: space.sm, backgroundColor: colors.card },
  seriesHead: { flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' },
  pickers: { gap: space.sm, alignSelf: 'stretch' },
  buttons: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, marginTop: space.sm },
});
