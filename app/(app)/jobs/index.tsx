import { Text, View } from 'react-native';
import { Card } from '../../../components/card';
import { Button } from '../../../components/button';
import { EmptyState } from '../../../components/empty-state';
import { ErrorView } from '../../../components/error-view';
import { JobProgress } from '../../../components/job-progress';
import { Screen } from '../../../components/screen';
import { RunsTabs } from '../../../components/runs-tabs';
import { space, text } from '../../../components/theme';
import { useJobs } from '../../../hooks/use-jobs';
import { useMe } from '../../../hooks/use-session';

export default function Jobs() {
  const me = useMe().data;
  const jobs = useJobs();
  const scope =
    me?.role === 'admin' ? 'Every deep check on this Keelson.' : me?.role === 'researcher' ? 'The deep checks you started.' : 'Deep checks on the runs you can read.';
  return (
    <Screen title="Deep checks" subtitle={`${scope} Progress refreshes every second while a check runs.`}>
      <RunsTabs />
      {jobs.error ? <ErrorView error={jobs.error} title="Could not load the deep checks" onRetry={() => void jobs.refetch()} /> : null}
      {jobs.data && jobs.data.length === 0 ? (
        <EmptyState title="No deep checks yet" body="Open a finished run and start a bootstrap, a subset sweep or a rolling window from its Deep checks panel." />
      ) : null}
      {jobs.data && jobs.data.length > 0 ? (
        <Card>
          <View style={{ gap: space.xs }}>
            {jobs.data.map((j) => (
              <JobProgress
                key={j.id}
                job={j}
                actions={
                  <>
                    <Button label="Open run" accessibilityLabel={`Open run ${j.runId}`} compact href={`/runs/${j.runId}`} />
                    {j.status === 'finished' ? <Button label="Result" accessibilityLabel={`Result of job ${j.id}`} compact href={`/jobs/${j.id}`} /> : null}
                  </>
                }
              />
            ))}
          </View>
        </Card>
      ) : null}
      {!jobs.data && !jobs.error ? <Text style={text.muted}>Loading…</Text> : null}
    </Screen>
  );
}
