/**
 * One deep-check job as a card: kind, state chip, parameters, a progress bar with done/total and
 * time left while it runs (with cancel), the reason when it failed or was interrupted, restart.
 */
import { useState } from 'react';
import { Text, View } from 'react-native';
import { JOB_KIND_LABELS, RESTARTABLE_JOB_STATUSES, type Job, type JobStatus } from '../shared/jobs';
import { useMe } from '../hooks/use-session';
import { isActiveJob, useCancelJob, useRestartJob } from '../hooks/use-jobs';
import { Button } from './button';
import { Chip, type ChipShape, type ChipTone } from './chip';
import { ErrorView } from './error-view';
import { ProgressBar } from './progress-bar';
import { formatWhen } from './format';
import { colors, space, text } from './theme';

export const JOB_STATUS_STYLE: Readonly<Record<JobStatus, { shape: ChipShape; tone: ChipTone }>> = {
  queued: { shape: 'dashed', tone: 'fog' },
  running: { shape: 'outlined', tone: 'brass' },
  finished: { shape: 'filled', tone: 'kelp' },
  failed: { shape: 'filled', tone: 'rust' },
  cancelled: { shape: 'dashed', tone: 'slate' },
  interrupted: { shape: 'outlined', tone: 'rust' },
};

export function JobStatusChip({ status }: { status: JobStatus }) {
  return <Chip label={status} {...JOB_STATUS_STYLE[status]} accessibilityLabel={`Job state: ${status}`} />;
}

/** "999 draws, moving blocks of 9" — the parameters in words. */
export function describeParams(job: Pick<Job, 'kind' | 'params'>): string {
  const p = job.params as Record<string, unknown>;
  if (job.kind === 'bootstrap')
    return `${String(p.draws)} draws, ${p.scheme === 'block' ? `moving blocks${p.blockLength ? ` of ${String(p.blockLength)}` : ''}` : 'iid resampling'}, seed ${String(p.seed)}`;
  if (job.kind === 'subset-sweep') {
    const c = p.candidates as string[] | undefined;
    return c ? `${c.length} candidates: ${c.join(', ')}` : "the run's factors as candidates";
  }
  return `${p.window === 'expanding' ? 'expanding' : 'rolling'} windows of ${String(p.length)}, step ${String(p.step)}`;
}

export function jobLabel(job: Pick<Job, 'kind' | 'id'>): string {
  return `${JOB_KIND_LABELS[job.kind]} #${job.id}`;
}

export interface JobProgressProps {
  job: Job;
  /** Buttons after the state line (e.g. "Show result", "Open run"). */
  actions?: React.ReactNode;
}

export function JobProgress({ job, actions }: JobProgressProps) {
  const me = useMe().data;
  const cancel = useCancelJob();
  const restart = useRestartJob();
  const mayChange = !!me && (me.role === 'admin' || (me.role === 'researcher' && me.id === job.authorId));
  const label = jobLabel(job);
  const [asking, setAsking] = useState(false);
  return (
    <View style={{ gap: space.sm, paddingVertical: space.sm, borderBottomWidth: 1, borderBottomColor: colors.rule }} aria-label={label} role="group">
      <View style={{ flexDirection: 'row', alignItems: 'center', flexWrap: 'wrap', gap: space.sm }}>
        <Text style={[text.strong, { flexShrink: 1 }]}>{label}</Text>
        <JobStatusChip status={job.status} />
        <Text style={text.muted}>run #{job.runId}</Text>
      </View>
      <Text style={text.muted}>
        {describeParams(job)} · by {job.authorName} · {formatWhen(job.createdAt)}
      </Text>
      {isActiveJob(job) ? (
        <ProgressBar
          label={`${label} progress`}
          done={job.done}
          total={job.total}
          secondsLeft={job.etaSeconds}
          onCancel={mayChange && !asking ? () => setAsking(true) : undefined}
          cancelling={cancel.isPending}
        />
      ) : null}
      {asking && isActiveJob(job) ? (
        <View role="alert" aria-label={`Confirm cancelling ${label}`} style={{ gap: space.sm, padding: space.sm, backgroundColor: colors.brassTint, borderRadius: 4 }}>
          <Text style={text.body}>Cancel {label}? The work done so far is discarded; you can start it again later.</Text>
          <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
            <Button
              compact
              variant="danger"
              label="Yes, cancel it"
              accessibilityLabel={`Yes, cancel ${label}`}
              busy={cancel.isPending}
              onPress={() => cancel.mutate(job.id, { onSettled: () => setAsking(false) })}
            />
            <Button compact variant="quiet" label="Keep it running" accessibilityLabel={`Keep ${label} running`} onPress={() => setAsking(false)} />
          </View>
        </View>
      ) : null}
      {job.status === 'cancelled' || job.status === 'interrupted' ? (
        <Text style={text.muted}>
          Stopped at {job.done} / {job.total}. {job.status === 'interrupted' ? job.error : 'No result is kept for a cancelled check.'}
        </Text>
      ) : null}
      {job.status === 'failed' && job.error ? <Text style={[text.body, { color: colors.rust }]}>Failed: {job.error}</Text> : null}
      {cancel.error ? <ErrorView error={cancel.error} title="Could not cancel" /> : null}
      {restart.error ? <ErrorView error={restart.error} title="Could not restart" /> : null}
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
        {mayChange && RESTARTABLE_JOB_STATUSES.includes(job.status) ? (
          <Button label="Restart" accessibilityLabel={`Restart ${label}`} compact onPress={() => restart.mutate(job.id)} busy={restart.isPending} />
        ) : null}
        {actions}
      </View>
    </View>
  );
}
