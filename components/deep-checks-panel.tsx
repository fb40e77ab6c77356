/**
 * Deep checks of one finished run (the run page's panel): start a bootstrap, a subset sweep or a
 * rolling window as a background job (researchers and admins), watch each job's progress (polled
 * every second while it runs), cancel or restart it, and read a finished job's result.
 */
import { useRef, useState } from 'react';
import { Text, View } from 'react-native';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { JOB_KIND_LABELS, jobResponseSchema, sweepLimitText, type Job, type JobKind, type JobLimits, type StartCheckBody } from '../shared/jobs';
import type { KeelsonApiError } from '../shared/errors';
import { apiRequest, newIdempotencyKey } from '../api/client';
import { useMe } from '../hooks/use-session';
import { jobKeys, useJob, useJobLimits, useJobs } from '../hooks/use-jobs';
import { Button } from './button';
import { Card } from './card';
import { DeepCheckResult } from './deep-check-results';
import { ErrorView } from './error-view';
import { JobProgress } from './job-progress';
import { Select } from './select';
import { TextField } from './text-field';
import { space, text } from './theme';

const count = (n: number) => n.toLocaleString('en-US');

/** The hint under the candidates field: this server's limit, and both modes'. */
export function sweepLimitHint(limits: JobLimits | undefined): string {
  const base = 'Factor series of this run’s edition, separated by commas; empty: the run’s own factors.';
  if (!limits) return `${base} The sweep takes ${sweepLimitText()}.`;
  const n = limits.sweepCandidates;
  const where = limits.mode === 'queue' ? 'this server runs deep checks on queue workers' : 'this server runs deep checks without workers';
  return `${base} At most ${n} here (${count(2 ** n - 1)} models): ${where}. The sweep takes ${sweepLimitText()}.`;
}

const KIND_HELP: Readonly<Record<JobKind, string>> = {
  bootstrap:
    'Resamples the run’s periods under the null (recentred moments) to get p-values for J, each b and each drop test that do not lean on large-sample theory — useful with many test assets or a short sample.',
  'subset-sweep': 'Estimates every combination of the candidate factors on the same assets and ranks them by HJ distance and by the drop test against the full model.',
  rolling: 'Re-estimates b and λ with their standard errors on rolling or expanding windows, to see whether they drift.',
  holdout:
    'Estimates b with this run’s settings on the periods before a split and prices the periods after it: pricing errors α₂ per asset, mean |α₂| and the out-of-sample R² (1 − α₂′α₂ / m₂′m₂). The rolling version re-estimates on each window and prices the next block.',
};

/** Numbers need no full-width input on wide screens. */
const NUMBER_BOX = { maxWidth: 320 } as const;

function intOrUndefined(s: string): number | undefined {
  const t = s.trim();
  if (t === '') return undefined;
  const n = Number(t);
  return Number.isFinite(n) ? n : NaN;
}

/**
 * Starts a deep check with an `Idempotency-Key`: the same key is sent again for the same request
 * until one succeeds (a retry after a lost answer does not make a second job), and a double press
 * while one is on its way sends nothing.
 */
function useStartCheckOnce(runId: number) {
  const qc = useQueryClient();
  const pending = useRef<{ body: string; key: string } | null>(null);
  const inFlight = useRef(false);
  const m = useMutation<Job, KeelsonApiError, StartCheckBody>({
    mutationFn: async (body) => {
      const text = JSON.stringify(body);
      if (!pending.current || pending.current.body !== text) pending.current = { body: text, key: newIdempotencyKey() };
      const r = await apiRequest(`/runs/${runId}/checks`, { method: 'POST', body, schema: jobResponseSchema, headers: { 'Idempotency-Key': pending.current.key } });
      pending.current = null;
      return r.job as Job;
    },
    onSuccess: (job) => {
      qc.setQueryData(jobKeys.one(job.id), job);
      void qc.invalidateQueries({ queryKey: jobKeys.lists });
    },
    onSettled: () => {
      inFlight.current = false;
    },
  });
  const start = (body: StartCheckBody) => {
    if (inFlight.current) return;
    inFlight.current = true;
    m.mutate(body);
  };
  return { ...m, start };
}

function StartForm({ runId }: { runId: number }) {
  const start = useStartCheckOnce(runId);
  const limits = useJobLimits();
  const [kind, setKind] = useState<JobKind>('bootstrap');
  const [draws, setDraws] = useState('999');
  const [scheme, setScheme] = useState<'iid' | 'block'>('iid');
  const [block, setBlock] = useState('');
  const [seed, setSeed] = useState('');
  const [candidates, setCandidates] = useState('');
  const [windowKind, setWindowKind] = useState<'rolling' | 'expanding'>('rolling');
  const [length, setLength] = useState('60');
  const [step, setStep] = useState('12');
  const [holdMode, setHoldMode] = useState<'date' | 'fraction' | 'rolling'>('fraction');
  const [holdFrom, setHoldFrom] = useState('');
  const [holdFraction, setHoldFraction] = useState('0.7');
  const [holdLength, setHoldLength] = useState('120');
  const [holdStep, setHoldStep] = useState('12');

  const submit = () => {
    let body: StartCheckBody;
    if (kind === 'bootstrap') {
      const blockLength = scheme === 'block' ? intOrUndefined(block) : undefined;
      const s = intOrUndefined(seed);
      body = { kind, params: { draws: intOrUndefined(draws) ?? 999, scheme, ...(blockLength !== undefined ? { blockLength } : {}), ...(s !== undefined ? { seed: s } : {}) } };
    } else if (kind === 'subset-sweep') {
      const list = candidates
        .split(/[,\s]+/)
        .map((c) => c.trim())
        .filter(Boolean);
      body = { kind, params: list.length ? { candidates: list } : {} };
    } else if (kind === 'rolling') {
      body = { kind, params: { window: windowKind, length: intOrUndefined(length) ?? 0, step: intOrUndefined(step) ?? 12 } };
    } else if (holdMode === 'rolling') {
      body = { kind, params: { mode: 'rolling', length: intOrUndefined(holdLength) ?? 0, step: intOrUndefined(holdStep) ?? 12 } };
    } else if (holdMode === 'date') {
      body = { kind, params: { mode: 'split', from: holdFrom.trim() } };
    } else {
      const f = Number(holdFraction.trim());
      body = { kind, params: { mode: 'split', fraction: holdFraction.trim() === '' ? NaN : f } };
    }
    start.start(body);
  };

  return (
    <View style={{ gap: space.md }}>
      <Select
        label="Check"
        value={kind}
        options={(['bootstrap', 'subset-sweep', 'rolling', 'holdout'] as const).map((k) => ({ value: k, label: JOB_KIND_LABELS[k] }))}
        onChange={(k) => {
          setKind(k);
          start.reset();
        }}
      />
      <Text style={text.muted}>{KIND_HELP[kind]}</Text>
      {kind === 'bootstrap' ? (
        <View style={{ gap: space.sm }}>
          <View style={NUMBER_BOX}>
            <TextField label="Draws" value={draws} onChangeText={setDraws} numeric inputMode="numeric" hint={`B bootstrap samples; 999 is the default${limits.data ? `, at most ${count(limits.data.bootstrapDraws)} on this server` : ''}.`} />
          </View>
          <Select
            label="Resampling"
            value={scheme}
            options={[
              { value: 'iid', label: 'iid periods' },
              { value: 'block', label: 'moving blocks' },
            ]}
            onChange={setScheme}
          />
          {scheme === 'block' ? (
            <View style={NUMBER_BOX}>
              <TextField label="Block length" value={block} onChangeText={setBlock} numeric inputMode="numeric" hint="Empty: ceil(T^(1/3)) periods." />
            </View>
          ) : null}
          <View style={NUMBER_BOX}>
            <TextField label="Seed" value={seed} onChangeText={setSeed} numeric inputMode="numeric" hint="Empty: a random seed, stored with the job so it can be repeated." />
          </View>
        </View>
      ) : null}
      {kind === 'subset-sweep' ? (
        <TextField
          label="Candidate factors"
          value={candidates}
          onChangeText={setCandidates}
          hint={sweepLimitHint(limits.data)}
        />
      ) : null}
      {kind === 'rolling' ? (
        <View style={{ gap: space.sm }}>
          <Select
            label="Windows"
            value={windowKind}
            options={[
              { value: 'rolling', label: 'rolling' },
              { value: 'expanding', label: 'expanding' },
            ]}
            onChange={setWindowKind}
          />
          <View style={NUMBER_BOX}>
            <TextField label="Window length" value={length} onChangeText={setLength} numeric inputMode="numeric" hint="Periods per window (the first window when expanding)." />
          </View>
          <View style={NUMBER_BOX}>
            <TextField label="Step" value={step} onChangeText={setStep} numeric inputMode="numeric" hint="Periods between windows." />
          </View>
        </View>
      ) : null}
      {kind === 'holdout' ? (
        <View style={{ gap: space.sm }}>
          <Select
            label="Hold-out"
            value={holdMode}
            options={[
              { value: 'fraction', label: 'split at a fraction of the sample' },
              { value: 'date', label: 'split at a date' },
              { value: 'rolling', label: 'rolling: window, then the next block' },
            ]}
            onChange={setHoldMode}
          />
          {holdMode === 'fraction' ? (
            <View style={NUMBER_BOX}>
              <TextField label="Estimation fraction" value={holdFraction} onChangeText={setHoldFraction} inputMode="decimal" hint="Share of the periods used to estimate b (e.g. 0.7); the rest is priced." />
            </View>
          ) : null}
          {holdMode === 'date' ? (
            <View style={NUMBER_BOX}>
              <TextField label="First hold-out period" value={holdFrom} onChangeText={setHoldFrom} hint="YYYY-MM or YYYY-MM-DD; b is estimated on the periods before it." />
            </View>
          ) : null}
          {holdMode === 'rolling' ? (
            <>
              <View style={NUMBER_BOX}>
                <TextField label="Window length" value={holdLength} onChangeText={setHoldLength} numeric inputMode="numeric" hint="Periods each b is estimated on (at least N + K + 1)." />
              </View>
              <View style={NUMBER_BOX}>
                <TextField label="Step" value={holdStep} onChangeText={setHoldStep} numeric inputMode="numeric" hint="Periods priced after each window, and between windows (at least 2)." />
              </View>
            </>
          ) : null}
        </View>
      ) : null}
      {start.error ? <ErrorView error={start.error} title="The check was not started" /> : null}
      <View style={{ flexDirection: 'row' }}>
        <Button label="Start deep check" variant="primary" onPress={submit} busy={start.isPending} disabled={start.isPending} />
      </View>
    </View>
  );
}

function ResultToggle({ jobId }: { jobId: number }) {
  const job = useJob(jobId);
  if (job.error) return <ErrorView error={job.error} title="Could not load the result" />;
  if (!job.data) return <Text style={text.muted}>Loading the result…</Text>;
  return <DeepCheckResult job={job.data} />;
}

export function DeepChecksPanel({ runId }: { runId: number }) {
  const me = useMe().data;
  const jobs = useJobs({ runId });
  const [open, setOpen] = useState<number | null>(null);
  const mayStart = me?.role === 'researcher' || me?.role === 'admin';
  return (
    <Card
      title="Deep checks"
      subtitle="Bootstrap, subset sweep, rolling window and hold-out check run in the background; this panel follows their progress."
      accessibilityLabel="Deep checks"
      aside={<Button label="All deep checks" href="/jobs" compact variant="quiet" />}
    >
      {mayStart ? <StartForm runId={runId} /> : <Text style={text.muted}>Researchers and admins start deep checks; you can follow and read them here.</Text>}
      {jobs.error ? <ErrorView error={jobs.error} title="Could not load the deep checks" onRetry={() => void jobs.refetch()} /> : null}
      {jobs.data && jobs.data.length === 0 ? <Text style={text.muted}>No deep check has been run on this run yet.</Text> : null}
      <View>
        {(jobs.data ?? []).map((j) => (
          <View key={j.id} style={{ gap: space.sm }}>
            <JobProgress
              job={j}
              actions={
                j.status === 'finished' ? (
                  <Button
                    label={open === j.id ? 'Hide result' : 'Show result'}
                    accessibilityLabel={`${open === j.id ? 'Hide' : 'Show'} result of ${JOB_KIND_LABELS[j.kind]} #${j.id}`}
                    compact
                    onPress={() => setOpen(open === j.id ? null : j.id)}
                  />
                ) : null
              }
            />
            {open === j.id && j.status === 'finished' ? <ResultToggle jobId={j.id} /> : null}
          </View>
        ))}
      </View>
    </Card>
  );
}
