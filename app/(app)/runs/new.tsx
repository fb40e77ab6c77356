import { router } from 'expo-router';
import { RoleGate } from '../../../components/role-gate';
import { Screen } from '../../../components/screen';
import { SpecForm, type SpecFormSubmit } from '../../../components/spec-form';
import { useCreateRun } from '../../../hooks/use-runs';
import { useSaveSpec } from '../../../hooks/use-specs';

/**
 * New model spec: save it, save and run it, or run it once without saving. Each POST carries the
 * form's Idempotency-Key for the action, so a repeated press or a retry creates one spec and one run.
 */
export default function NewSpec() {
  const save = useSaveSpec();
  const run = useCreateRun();
  const onSubmit = async (v: SpecFormSubmit) => {
    if (v.action === 'run') {
      const r = await run.mutateAsync({ editionId: v.editionId, spec: v.spec, name: v.name, idempotencyKey: v.keys.run });
      router.push(`/runs/${r.id}`);
      return;
    }
    const s = await save.mutateAsync({ name: v.name, editionId: v.editionId, spec: v.spec, idempotencyKey: v.keys.spec });
    if (v.action === 'save') {
      router.push(`/specs/${s.id}`);
      return;
    }
    const r = await run.mutateAsync({ specId: s.id, idempotencyKey: v.keys.run });
    router.push(`/runs/${r.id}`);
  };
  return (
    <RoleGate roles={['researcher', 'admin']} title="New model spec">
      <Screen title="New model spec" subtitle="Choose the data and the moment conditions; a run estimates the spec and freezes a copy of it.">
        <SpecForm onSubmit={onSubmit} />
      </Screen>
    </RoleGate>
  );
}
