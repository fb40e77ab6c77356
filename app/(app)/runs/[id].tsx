import { useState } from 'react';
import { Text, View } from 'react-native';
import { router, useLocalSearchParams } from 'expo-router';
import { useMe } from '../../../hooks/use-session';
import { useIsWide } from '../../../hooks/use-layout';
import { useRun, useRunBootstrap } from '../../../hooks/use-runs';
import { Screen } from '../../../components/screen';
import { Card } from '../../../components/card';
import { Button } from '../../../components/button';
import { ErrorView } from '../../../components/error-view';
import { TextField } from '../../../components/text-field';
import { formatWhen } from '../../../components/format';
import { JointDropCard, LedgerTable, LedgerTestsTable } from '../../../components/ledger-table';
import { BasisSwitcher, LedgerBasisBar } from '../../../components/ledger-basis';
import { LedgerFit } from '../../../components/ledger-fit';
import { LedgerCharts } from '../../../components/ledger-charts';
import { RunCaution, RunExports, RunPending, RunSpecSummary, RunStatusChip } from '../../../components/run-summary';
import { RunReview, SignoffChip } from '../../../components/run-review';
import { space, text } from '../../../components/theme';
import { DeepChecksPanel } from '../../../components/deep-checks-panel';
import { CompareWithPicker } from '../../../components/compare-pick';
import { ledgerWarningText } from '../../../shared/gmm-messages';

export default function RunPage() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const runId = Number(id);
  const me = useMe().data;
  const q = useRun(Number.isInteger(runId) && runId > 0 ? runId : undefined);
  const [other, setOther] = useState('');
  const boot = useRunBootstrap(q.data);
  const wide = useIsWide();

  if (q.isPending) return <Screen title={`Run #${id}`} subtitle="Loading…" />;
  if (q.isError)
    return (
      <Screen title={`Run #${id}`}>
        <ErrorView error={q.error} title="This run could not be opened" onRetry={() => void q.refetch()} />
        <Button label="All runs" href="/runs" />
      </Screen>
    );
  const run = q.data;
  const r = run.result;
  return (
    <Screen
      title={`Run #${run.id}${run.specName ? ` · ${run.specName}` : ''}`}
      subtitle={`${run.libraryName}, edition ${run.editionNumber} · by ${run.authorName} · ${formatWhen(run.finishedAt ?? run.createdAt)}`}
      actions={<RunExports run={run} />}
      fullWidth
    >
      <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap', alignItems: 'center' }}>
        <RunStatusChip status={run.status} />
        <SignoffChip state={run.signoff} />
        {r ? <Text style={text.muted}>N {r.N} · K {r.K} · T {r.T} · df {r.N - r.K}</Text> : null}
      </View>
      {run.status === 'queued' || run.status === 'running' ? <RunPending run={run} me={me} /> : null}
      {run.status === 'cancelled' ? (
        <Text style={text.body} accessibilityLabel="Run cancelled notice">
          {run.error ?? 'This run was cancelled.'} It was stopped {run.finishedAt ? `${formatWhen(run.finishedAt)}, ` : ''}before it was estimated, so it has no ledger; start its spec again to estimate it.
        </Text>
      ) : null}
      {run.status === 'failed' ? (
        <ErrorView error={new Error(run.error ?? 'The run failed.')} title="The estimator refused this model on these data" />
      ) : null}
      {r ? <RunCaution /> : null}
      {r ? (
        <Card title="Factor ledger" accessibilityLabel="Factor ledger" subtitle="b answers “needed?”, λ answers “priced?”. Verdict last, with the basis it rests on.">
          <LedgerBasisBar run={run} me={me} bootstrapJob={boot.job} bootstrapPending={boot.pending} />
          <LedgerTable result={r} bootstrapPending={boot.pending} />
        </Card>
      ) : null}
      {r && (wide || r.jointDrop) ? (
        <Card title="Drop tests and spanning checks" accessibilityLabel="Drop tests and spanning checks" subtitle="Can the factor be dropped? Do the other factors span it?">
          <LedgerTestsTable result={r} bootstrapPending={boot.pending} />
          <JointDropCard result={r} bootstrapPending={boot.pending} />
          {!r.jointDrop ? <Text style={text.muted}>No joint drop set in this spec.</Text> : null}
        </Card>
      ) : null}
      {r && run.status === 'finished' ? (
        <Card title="Basis of the verdicts" accessibilityLabel="Basis of the verdicts" subtitle="standard, robust or bootstrap">
          <BasisSwitcher run={run} me={me} />
        </Card>
      ) : null}
      {r ? (
        <Card title="Fit" accessibilityLabel="Fit">
          <LedgerFit result={r} bootstrapPending={boot.pending} />
        </Card>
      ) : null}
      {r ? (
        <Card title="Charts" accessibilityLabel="Charts">
          <LedgerCharts result={r} runId={run.id} />
        </Card>
      ) : null}
      {/* Deep checks (owned by the checks module): mount its run panel on the next line. */}
      {r ? <DeepChecksPanel runId={run.id} /> : null}
      {r && r.warnings.length > 0 ? (
        <Card title="Notes from the estimator">
          {r.warnings.map((w, i) => (
            <Text key={`${w.code}-${i}`} style={text.body}>
              • {ledgerWarningText(w)}
            </Text>
          ))}
        </Card>
      ) : null}
      <Card title="Model spec (frozen with the run)">
        <RunSpecSummary run={run} />
        {run.specId ? <Button label="Open the saved spec" href={`/specs/${run.specId}`} compact /> : null}
      </Card>
      {r ? (
        <Card title="Compare with…" subtitle={`Finished runs on ${run.libraryName}, edition ${run.editionNumber}. Same data: a drop test shows when one model nests the other.`}>
          <CompareWithPicker run={run} />
          <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'flex-end', flexWrap: 'wrap' }}>
            <View style={{ width: 200 }}>
              <TextField label="Or type a run number" value={other} onChangeText={setOther} numeric inputMode="numeric" />
            </View>
            <Button
              label="Compare"
              disabled={!/^\d+$/.test(other) || Number(other) === run.id}
              onPress={() => router.push({ pathname: '/runs/compare', params: { a: String(run.id), b: other } })}
            />
          </View>
        </Card>
      ) : null}
      {me ? (
        <Card title="Review">
          <RunReview run={run} me={me} />
        </Card>
      ) : null}
    </Screen>
  );
}
