import { useMemo, useState, type ReactNode } from 'react';
import { ActivityIndicator, Pressable, StyleSheet, Text, View } from 'react-native';
import { useIsWide } from '../hooks/use-layout';
import { useArchiveLibrary, useDeleteEdition, useEdition, useEditionData, useLibrary, usePublishLibrary, useUnpublishLibrary } from '../hooks/use-libraries';
import { exportUrl } from '../api/libraries';
import { Button } from './button';
import { Card } from './card';
import { ErrorView } from './error-view';
import { EmptyState } from './empty-state';
import { formatWhen } from './format';
import { LibraryChips } from './library-card';
import { LibraryChart } from './library-chart';
import { DownloadLink, LibraryEditions } from './library-editions';
import { LibrarySeriesTable } from './library-series-table';
import { Screen } from './screen';
import { colors, fonts, radius, space, text } from './theme';

export interface LibraryDetailProps {
  id: number;
  /** Edition to show; the latest when not given. */
  edition?: number;
  onSelectEdition: (n: number) => void;
  /** Inside the wide libraries list (beside it) instead of on its own page: an h2 header, one column. */
  embedded?: boolean;
}

/** One return library: chosen edition (summary, chart, series table) beside its about card and edition history. */
export function LibraryDetail({ id, edition: chosen, onSelectEdition, embedded }: LibraryDetailProps) {
  const lib = useLibrary(Number.isInteger(id) && id > 0 ? id : undefined);
  const wide = useIsWide() && !embedded;
  const n = chosen ?? lib.data?.latestEdition ?? undefined;
  const edition = useEdition(lib.data?.id, n);
  const publish = usePublishLibrary();
  const unpublish = useUnpublishLibrary();
  const archive = useArchiveLibrary();
  const del = useDeleteEdition();
  const [asking, setAsking] = useState<'share' | 'unshare' | null>(null);

  const Frame = embedded ? Pane : Screen;
  if (!(Number.isSafeInteger(id) && id > 0))
    return (
      <Frame title="Library">
        <EmptyState title="Library not found" body="This link names no library: ids are whole numbers such as 12." action={embedded ? undefined : <Button label="Back to libraries" href="/libraries" />} />
      </Frame>
    );
  if (lib.isPending) return <Frame title="Library"><ActivityIndicator color={colors.brass} accessibilityLabel="Loading library" /></Frame>;
  if (lib.isError) {
    return (
      <Frame title="Library">
        <ErrorView error={lib.error} title="This library could not be opened" />
        {embedded ? null : <Button label="Back to libraries" href="/libraries" />}
      </Frame>
    );
  }
  const l = lib.data;
  const select = onSelectEdition;
  const actionError = publish.error ?? unpublish.error ?? archive.error ?? del.error;
  const ask = (what: 'share' | 'unshare') => {
    publish.reset();
    unpublish.reset();
    setAsking(what);
  };

  const actions = (
    <>
      {l.can.addEdition ? <Button variant="primary" label="Upload new edition" href={`/libraries/upload?libraryId=${l.id}`} /> : null}
      {l.can.publish && asking !== 'share' ? <Button label="Share with the team" busy={publish.isPending} onPress={() => ask('share')} /> : null}
      {l.can.unpublish && asking !== 'unshare' ? <Button label="Stop sharing" busy={unpublish.isPending} onPress={() => ask('unshare')} /> : null}
      {l.can.archive ? (
        <Button
          variant={l.archived ? 'secondary' : 'danger'}
          label={l.archived ? 'Restore library' : 'Archive library'}
          busy={archive.isPending}
          onPress={() => archive.mutate({ id: l.id, archived: !l.archived })}
        />
      ) : null}
    </>
  );

  const main = (
    <View style={{ gap: space.lg, flex: wide ? 2 : undefined, minWidth: 0 }}>
      {edition.isPending ? (
        <ActivityIndicator color={colors.brass} accessibilityLabel="Loading edition" />
      ) : edition.isError ? (
        <ErrorView error={edition.error} title={`Edition ${n} could not be loaded`} />
      ) : (
        <>
          <Card
            title={`Edition ${edition.data.number}`}
            subtitle={`${edition.data.firstDate} – ${edition.data.lastDate} · ${edition.data.rows} ${edition.data.frequency} rows · ${edition.data.series.length} series`}
            aside={<DownloadLink href={exportUrl(l.id, edition.data.number)} label="Download CSV" name={`Download edition ${edition.data.number} as CSV`} />}
          >
            <Text style={text.muted}>
              Stored as decimals{edition.data.sourceUnits === 'percent' ? ' (uploaded in percent, divided by 100)' : ''}. From {edition.data.fileName || 'an upload'} by{' '}
              {edition.data.createdBy?.name ?? 'unknown'}, {formatWhen(edition.data.createdAt)}.
            </Text>
          </Card>
          <ChartCard libraryName={l.name} libraryId={l.id} n={edition.data.number} names={edition.data.series.map((s) => s.name)} defaults={defaultChartSeries(edition.data.series)} />
          <Card title="Series" subtitle="Values in decimals; sd uses divisor T.">
            <LibrarySeriesTable series={edition.data.series} />
          </Card>
        </>
      )}
    </View>
  );

  const side = (
    <View style={{ gap: space.lg, flex: wide ? 1 : undefined, minWidth: 0 }}>
      <Card title="About">
        <LibraryChips lib={l} />
        {l.description ? <Text style={text.body}>{l.description}</Text> : null}
        <Text style={text.muted}>
          {l.visibility === 'shared' ? 'Shared with the whole team.' : `Private to ${l.owner?.name ?? 'its owner'}.`} Created {formatWhen(l.createdAt)}
          {l.archivedAt ? `; archived ${formatWhen(l.archivedAt)}` : ''}.
        </Text>
      </Card>
      <Card title="Edition history" subtitle="Runs record the exact edition they used.">
        <LibraryEditions
          libraryId={l.id}
          editions={l.editions}
          selected={n}
          canDelete={l.can.deleteEdition}
          deleting={del.isPending ? del.variables?.n : undefined}
          onSelect={select}
          onDelete={(k) =>
            del.mutate(
              { id: l.id, n: k },
              {
                onSuccess: () => {
                  const next = l.editions.find((e) => e.number !== k)?.number;
                  if (k === n && next !== undefined) select(next);
                },
              },
            )
          }
        />
      </Card>
    </View>
  );

  return (
    <Frame title={l.name} subtitle={`${l.frequency ?? ''} return library · ${l.editionCount} edition${l.editionCount === 1 ? '' : 's'}`} actions={actions} fullWidth={wide}>
      {asking === 'share' && l.can.publish ? (
        <View style={styles.confirm} role="alert" aria-label="Confirm sharing">
          <Text style={text.body}>
            Share {l.name} with the whole team? Everyone signed in — researchers, reviewers and desk users — will read all its editions and can start runs on them. You can stop sharing
            later as long as nobody else has a run or a saved spec on it.
          </Text>
          <View style={styles.confirmActions}>
            <Button variant="primary" compact label="Yes, share it" busy={publish.isPending} onPress={() => publish.mutate(l.id, { onSuccess: () => setAsking(null) })} />
            <Button variant="quiet" compact label="Keep it private" onPress={() => setAsking(null)} />
          </View>
        </View>
      ) : null}
      {asking === 'unshare' && l.can.unpublish ? (
        <View style={styles.confirm} role="alert" aria-label="Confirm stop sharing">
          <Text style={text.body}>
            Stop sharing {l.name}? It becomes private to {l.owner?.name ?? 'admins'} again: the others no longer see it, nor the runs on it. Keelson refuses while someone else has a run
            or a saved spec on it (archive it then).
          </Text>
          <View style={styles.confirmActions}>
            <Button variant="danger" compact label="Yes, stop sharing" busy={unpublish.isPending} onPress={() => unpublish.mutate(l.id, { onSuccess: () => setAsking(null) })} />
            <Button variant="quiet" compact label="Keep it shared" onPress={() => setAsking(null)} />
          </View>
        </View>
      ) : null}
      {actionError ? <ErrorView error={actionError} title="That did not work" /> : null}
      {l.editions.length === 0 ? <EmptyState title="No editions" body="This library has no edition left." /> : null}
      <View style={wide ? { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' } : { gap: space.lg }}>
        {main}
        {side}
      </View>
      {embedded ? (
        <Button variant="quiet" label="Open on its own page" accessibilityLabel={`Open ${l.name} on its own page`} href={`/libraries/${l.id}`} />
      ) : (
        <Button variant="quiet" label="Back to libraries" href="/libraries" />
      )}
    </Frame>
  );
}

/** Header and body of a library shown beside the list (h2: the page's h1 stays "Return libraries"). */
function Pane({ title, subtitle, actions, children }: { title: string; subtitle?: string; actions?: ReactNode; children?: ReactNode; fullWidth?: boolean }) {
  return (
    <View role="region" aria-label={`Library ${title}`} style={{ gap: space.lg }}>
      <View style={{ gap: space.sm }}>
        <Text style={text.title} role="heading" aria-level={2}>
          {title}
        </Text>
        {subtitle ? <Text style={[text.body, { color: colors.slate }]}>{subtitle}</Text> : null}
        {actions ? <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>{actions}</View> : null}
      </View>
      {children}
    </View>
  );
}

function defaultChartSeries(series: readonly { name: string; kind: string }[]): string[] {
  const factors = series.filter((s) => s.kind === 'factor').map((s) => s.name);
  return (factors.length ? factors : series.map((s) => s.name)).slice(0, 3);
}

function ChartCard({ libraryName, libraryId, n, names, defaults }: { libraryName: string; libraryId: number; n: number; names: string[]; defaults: string[] }) {
  const [chosen, setChosen] = useState<string[]>(defaults);
  const [open, setOpen] = useState(false);
  const data = useEditionData(libraryId, n);
  const lines = useMemo(() => {
    if (!data.data) return [];
    const by = new Map(data.data.series.map((s) => [s.name, s.values]));
    return chosen.filter((c) => by.has(c)).map((c) => ({ name: c, values: by.get(c)! }));
  }, [data.data, chosen]);
  const toggle = (name: string) => setChosen((c) => (c.includes(name) ? c.filter((x) => x !== name) : c.length >= 6 ? c : [...c, name]));
  return (
    <Card title="Cumulative return" subtitle="Π(1 + r) − 1 of the chosen series (up to six); a missing value counts as no change.">
      {data.isPending ? (
        <ActivityIndicator color={colors.brass} accessibilityLabel="Loading values" />
      ) : data.isError ? (
        <ErrorView error={data.error} title="Values could not be loaded" />
      ) : (
        <LibraryChart
          dates={data.data.dates}
          series={lines}
          label="Cumulative return chart"
          title={`${libraryName}, edition ${n}: cumulative return`}
          fileName={`${libraryName}-edition-${n}-cumulative-return`}
        />
      )}
      <Button compact variant="quiet" label={open ? 'Done choosing' : `Choose series (${chosen.length} shown)`} onPress={() => setOpen((o) => !o)} />
      {open ? (
        <View style={styles.toggles} role="group" aria-label="Series on the chart">
          {names.map((name) => {
            const on = chosen.includes(name);
            return (
              <Pressable key={name} role="checkbox" aria-checked={on} aria-label={`Chart ${name}`} onPress={() => toggle(name)} style={[styles.toggle, on && styles.toggleOn]}>
                <Text style={[styles.toggleText, on && { fontFamily: fonts.textStrong }]}>
                  {on ? '\u2611 ' : '\u2610 '}
                  {name}
                </Text>
              </Pressable>
            );
          })}
        </View>
      ) : null}
    </Card>
  );
}

const styles = StyleSheet.create({
  confirm: { gap: space.sm, padding: space.md, backgroundColor: colors.brassTint, borderRadius: radius.sm, borderWidth: 1, borderColor: colors.brass },
  confirmActions: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm },
  toggles: { flexDirection: 'row', flexWrap: 'wrap', gap: space.xs },
  toggle: { minHeight: 36, justifyContent: 'center', paddingHorizontal: space.sm, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.sm, backgroundColor: colors.card },
  toggleOn: { borderColor: colors.brass, backgroundColor: colors.brassTint },
  toggleText: { fontFamily: fonts.text, fontSize: 13, color: colors.ink },
});
