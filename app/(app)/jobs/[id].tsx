import { Text } from 'react-native';
import { useLocalSearchParams } from 'expo-router';
import { Button } from '../../../components/button';
import { Card } from '../../../components/card';
import { DeepCheckResult } from '../../../components/deep-check-results';
import { ErrorView } from '../../../components/error-view';
import { JobProgress, jobLabel } from '../../../components/job-progress';
import { Screen } from '../../../components/screen';
import { text } from '../../../components/theme';
import { useJob } from '../../../hooks/use-jobs';

export default function JobPage() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const jobId = Number(id);
  const job = useJob(Number.isInteger(jobId) && jobId > 0 ? jobId : undefined);
  return (
    <Screen
      title={job.data ? jobLabel(job.data) : 'Deep check'}
      subtitle={job.data ? `On run #${job.data.runId}` : undefined}
      actions={job.data ? <Button label="Open run" href={`/runs/${job.data.runId}`} compact /> : null}
    >
      {job.error ? <ErrorView error={job.error} title="Could not load this deep check" /> : null}
      {job.data ? (
        <Card>
          <JobProgress job={job.data} />
          {job.data.status === 'finished' ? <DeepCheckResult job={job.data} /> : null}
        </Card>
      ) : null}
      {!job.data && !job.error ? <Text style={text.muted}>Loading…</Text> : null}
    </Screen>
  );
}
