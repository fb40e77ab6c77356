import { Text, View } from 'react-native';
import { router, useLocalSearchParams } from 'expo-router';
import { useMe } from '../../../hooks/use-session';
import { useCopySpec, useSaveSpec, useSpec } from '../../../hooks/use-specs';
import { useCreateRun } from '../../../hooks/use-runs';
import { Screen } from '../../../components/screen';
import { Card } from '../../../components/card';
import { Button } from '../../../components/button';
import { ErrorView } from '../../../components/error-view';
import { SpecForm, type SpecFormSubmit } from '../../../components/spec-form';
import { formatWhen } from '../../../components/format';
import { space, text } from '../../../components/theme';

/** A saved spec: its author (or an admin) edits it; researchers copy it; everyone may read it. */
export default function SpecPage() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const specId = Number(id);
  const me = useMe().data;
  const q = useSpec(Number.isInteger(specId) && specId > 0 ? specId : undefined);
  const save = useSaveSpec();
  const copy = useCopySpec();
  const run = useCreateRun();
  if (q.isPending) return <Screen title="Model spec" subtitle="Loading…" />;
  if (q.isError)
    return (
      <Screen title="Model spec">
        <ErrorView error={q.error} title="This spec could not be opened" />
      </Screen>
    );
  const s = q.data;
  const writer = me?.role === 'researcher' || me?.role === 'admin';
  const mayEdit = writer && (s.authorId === me?.id || me?.role === 'admin');
  const onSubmit = (v: SpecFormSubmit) => {
    save.mutate(
      { id: s.id, name: v.name, editionId: v.editionId, spec: v.spec },
      { onSuccess: () => (v.action === 'save' ? undefined : run.mutate({ specId: s.id }, { onSuccess: (r) => router.push(`/runs/${r.id}`) })) },
    );
  };
  return (
    <Screen
      title={s.name}
      subtitle={`Model spec by ${s.authorName} on ${s.libraryName}, edition ${s.editionNumber} · saved ${formatWhen(s.updatedAt)}`}
      actions={
        <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
          <Button label="Runs of this spec" href={`/runs?specId=${s.id}`} compact />
          {writer ? (
            <Button label="Copy" compact busy={copy.isPending} onPress={() => copy.mutate({ id: s.id }, { onSuccess: (c) => router.push(`/specs/${c.id}`) })} />
          ) : null}
          {writer ? <Button label="Run now" variant="primary" compact busy={run.isPending} onPress={() => run.mutate({ specId: s.id }, { onSuccess: (r) => router.push(`/runs/${r.id}`) })} /> : null}
        </View>
      }
    >
      {run.isError ? <ErrorView error={run.error} title="The run did not start" /> : null}
      {copy.isError ? <ErrorView error={copy.error} title="The spec was not copied" /> : null}
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
          busy={save.isPending || run.isPending}
          error={save.error}
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
        </Card>
      )}
    </Screen>
  );
}
