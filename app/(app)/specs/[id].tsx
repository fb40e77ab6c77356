import { Text, View } from 'react-native';
import { router, useLocalSearchParams } from 'expo-router';
import { isApiError, newIdempotencyKey } from '../../../api/client';
import { useMe } from '../../../hooks/use-session';
import { useArchiveSpec, useCopySpec, useSaveSpec, useSpec } from '../../../hooks/use-specs';
import { useCreateRun } from '../../../hooks/use-runs';
import { Screen } from '../../../components/screen';
import { Card } from '../../../components/card';
import { Button } from '../../../components/button';
import { EmptyState } from '../../../components/empty-state';
import { ErrorView } from '../../../components/error-view';
import { SpecForm, type SpecFormSubmit } from '../../../components/spec-form';
import { formatWhen } from '../../../components/format';
import { colors, space, text } from '../../../components/theme';
import { resolveBasis } from '../../../shared/specs';

/** A path id as the server reads it: a plain positive decimal (`1e3`, `0x10`, `01` name nothing). */
function pathId(raw: string | undefined): number | undefined {
  return raw && /^[1-9][0-9]{0,15}$/.test(raw) ? Number(raw) : undefined;
}

function SpecNotFound({ id }: { id: string | undefined }) {
  return (
    <Screen title="Model spec">
      <EmptyState
        title="Spec not found"
        body={`Keelson has no model spec ${id ? `'${id}'` : ''} that you can read. The link may be old or mistyped, or the spec belongs to a private library.`}
        action={<Button label="All model specs" href="/specs" />}
      />
    </Screen>
  );
}

/** A saved spec: its author (or an admin) edits, archives or restores it; researchers copy it; everyone may read it. */
export default function SpecPage() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const specId = pathId(id);
  const me = useMe().data;
  const q = useSpec(specId);
  const save = useSaveSpec();
  const copy = useCopySpec();
  const run = useCreateRun();
  const archive = useArchiveSpec();
  if (specId === undefined || isApiError(q.error, 'not_found')) return <SpecNotFound id={id} />;
  if (q.isPending) return <Screen title="Model spec" subtitle="Loading…" />;
  if (q.isError)
    return (
      <Screen title="Model spec">
        <ErrorView error={q.error} title="This spec could not be opened" onRetry={() => void q.refetch()} />
      </Screen>
    );
  const s = q.data;
  const writer = me?.role === 'researcher' || me?.role === 'admin';
  const mayEdit = writer && (s.authorId === me?.id || me?.role === 'admin');
  const archived = s.archivedAt !== null;
  const startRun = () =>
    run.mutateAsync({ specId: s.id, idempotencyKey: newIdempotencyKey() }).then(
      (r) => router.push(`/runs/${r.id}`),
      () => undefined, // shown from run.error
    );
  const onSubmit = async (v: SpecFormSubmit) => {
    await save.mutateAsync({ id: s.id, name: v.name, editionId: v.editionId, spec: v.spec });
    if (v.action === 'save') return;
    const r = await run.mutateAsync({ specId: s.id, idempotencyKey: v.keys.run });
    router.push(`/runs/${r.id}`);
  };
  return (
    <Screen
      title={s.name}
      subtitle={`Model spec by ${s.authorName} on ${s.libraryName}, edition ${s.editionNumber} · saved ${formatWhen(s.updatedAt)}`}
      actions={
        <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
          <Button label="Runs of this spec" href={`/runs?specId=${s.id}`} compact />
          {writer ? (
            <Button
              label="Copy"
              compact
              onPress={() =>
                copy.mutateAsync({ id: s.id }).then(
                  (c) => router.push(`/specs/${c.id}`),
                  () => undefined,
                )
              }
            />
          ) : null}
          {mayEdit ? (
            <Button
              label={archived ? 'Restore spec' : 'Archive spec'}
              compact
              variant={archived ? 'secondary' : 'quiet'}
              onPress={() => archive.mutateAsync({ id: s.id, archived: !archived }).catch(() => undefined)}
            />
          ) : null}
          {writer ? <Button label="Start run" variant="primary" compact disabled={save.isPending} onPress={startRun} /> : null}
        </View>
      }
    >
      {archived ? (
        <View role="status" aria-label="Archived spec" style={{ borderLeftWidth: 4, borderLeftColor: colors.fog, paddingLeft: space.sm, gap: 2 }}>
          <Text style={text.strong}>Archived {formatWhen(s.archivedAt!)}</Text>
          <Text style={text.muted}>Hidden from the specs list; its runs stay readable. {mayEdit ? 'Restore it to list it again.' : ''}</Text>
        </View>
      ) : null}
      {run.isError ? <ErrorView error={run.error} title="The run did not start" /> : null}
      {copy.isError ? <ErrorView error={copy.error} title="The spec was not copied" /> : null}
      {archive.isError ? <ErrorView error={archive.error} title={archived ? 'The spec was not restored' : 'The spec was not archived'} /> : null}
      {save.isSuccess ? (
        <Text style={text.muted} role="status">
          Saved. Runs already made keep the spec they were run with.
        </Text>
      ) : null}
      {mayEdit ? (
        <SpecForm
          key={s.updatedAt}
          initial={{ name: s.name, libraryId: s.libraryId, editionNumber: s.editionNumber, spec: s.spec }}
          onSubmit={onSubmit}
          busy={run.isPending || copy.isPending}
          saveLabel="Save changes"
          allowRunOnly={false}
        />
      ) : (
        <Card title="Read only" subtitle={writer ? 'Only the author or an admin edits this spec; copy it to make your own.' : 'Your role reads specs and runs; it does not edit them.'}>
          <Text style={text.body}>Test assets ({s.spec.assets.length}): {s.spec.assets.join(', ')}</Text>
          <Text style={text.body}>Factors ({s.spec.factors.length}): {s.spec.factors.map((f) => (s.spec.nonTraded.includes(f) ? `${f} (not traded)` : f)).join(', ')}</Text>
          <Text style={text.body}>
            {s.spec.stage} stage · {s.spec.weighting} weighting · {s.spec.form} · HAC lag {String(s.spec.lags)} · level {s.spec.level}
            {s.spec.rf ? ` · minus ${s.spec.rf}` : ''}
          </Text>
          <Text style={text.body}>
            Basis: {resolveBasis(s.spec)}
            {s.spec.basis ? '' : ' (default)'}
            {s.spec.bootstrap
              ? ` · bootstrap ${s.spec.bootstrap.draws} draws, ${s.spec.bootstrap.scheme}${s.spec.bootstrap.blockLength ? ` blocks of ${s.spec.bootstrap.blockLength}` : ''}, seed ${s.spec.bootstrap.seed}`
              : ''}
          </Text>
        </Card>
      )}
    </Screen>
  );
}
