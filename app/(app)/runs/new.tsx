import { router } from 'expo-router';
import { RoleGate } from '../../../components/role-gate';
import { Screen } from '../../../components/screen';
import { SpecForm, type SpecFormSubmit } from '../../../components/spec-form';
import { useCreateRun } from '../../../hooks/use-runs';
import { useSaveSpec } from '../../../hooks/use-specs';

/** New model spec: save it, save and run it, or run it once without saving. */
export default function NewSpec() {
  const save = useSaveSpec();
  const run = useCreateRun();
  const onSubmit = (v: SpecFormSubmit) => {
    if (v.action === 'run') {
      run.mutate({ editionId: v.editionId, spec: v.spec, name: v.name }, { onSuccess: (r) => router.push(`/runs/${r.id}`) });
      return;
    }
    save.mutate(
      { name: v.name, editionId: v.editionId, spec: v.spec },
      {
        onSuccess: (s) => {
          if (v.action === 'save') router.push(`/specs/${s.id}`);
          else run.mutate({ specId: s.id }, { onSuccess: (r) => router.push(`/runs/${r.id}`) });
        },
      },
    );
  };
  return (
    <RoleGate roles={['researcher', 'admin']} title="New model spec">
      <Screen title="New model spec" subtitle="Choose the data and the moment conditions; a run estimates the spec and freezes a copy of it.">
        <SpecForm onSubmit={onSubmit} busy={save.isPending || run.isPending} error={save.error ?? run.error} />
      </Screen>
    </RoleGate>
  );
}
