import { useLocalSearchParams } from 'expo-router';
import { useCompare } from '../../../hooks/use-runs';
import { Screen } from '../../../components/screen';
import { ErrorView } from '../../../components/error-view';
import { Button } from '../../../components/button';
import { CompareView } from '../../../components/compare-view';
import { RunCaution } from '../../../components/run-summary';

export default function Compare() {
  const { a, b } = useLocalSearchParams<{ a?: string; b?: string }>();
  const ia = Number(a);
  const ib = Number(b);
  const ok = Number.isInteger(ia) && Number.isInteger(ib) && ia > 0 && ib > 0 && ia !== ib;
  const q = useCompare(ok ? ia : undefined, ok ? ib : undefined);
  return (
    <Screen title={ok ? `Compare runs #${ia} and #${ib}` : 'Compare runs'} subtitle="Two runs side by side." fullWidth>
      {!ok ? <ErrorView error={new Error('Pick two different runs: /runs/compare?a=…&b=…')} title="Nothing to compare" /> : null}
      {q.isError ? <ErrorView error={q.error} title="The runs could not be compared" onRetry={() => void q.refetch()} /> : null}
      {q.data ? <RunCaution /> : null}
      {q.data ? <CompareView data={q.data} /> : null}
      <Button label="All runs" href="/runs" compact />
    </Screen>
  );
}
