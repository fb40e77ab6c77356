import { Text, View } from 'react-native';
import { useReviewQueue } from '../../../hooks/use-runs';
import { useMe } from '../../../hooks/use-session';
import { Screen } from '../../../components/screen';
import { Card } from '../../../components/card';
import { Button } from '../../../components/button';
import { EmptyState } from '../../../components/empty-state';
import { ErrorView } from '../../../components/error-view';
import { formatWhen } from '../../../components/format';
import { SignoffChip } from '../../../components/run-review';
import { space, text } from '../../../components/theme';
import type { RunSummary } from '../../../shared/runs';

function RunLine({ run, extra }: { run: RunSummary; extra: string }) {
  return (
    <View style={{ flexDirection: 'row', gap: space.md, alignItems: 'center', flexWrap: 'wrap', paddingVertical: space.xs }}>
      <View style={{ flex: 1, minWidth: 220, gap: 2 }}>
        <Text style={text.strong}>
          Run #{run.id}
          {run.specName ? ` · ${run.specName}` : ''}
        </Text>
        <Text style={text.muted}>
          {run.libraryName}, edition {run.editionNumber} · {run.factors.join(', ')} · by {run.authorName}
        </Text>
        <Text style={text.muted}>{extra}</Text>
      </View>
      <SignoffChip state={run.signoff} />
      <Button label={`Open run ${run.id}`} href={`/runs/${run.id}`} compact />
    </View>
  );
}

/** Sign-offs: runs awaiting my sign-off, the requests I made, recent decisions. */
export default function Review() {
  const me = useMe().data;
  const q = useReviewQueue();
  const reviewer = me?.role === 'reviewer' || me?.role === 'admin';
  return (
    <Screen title="Sign-offs" subtitle="A reviewer’s decision on a finished run: approved, or changes requested.">
      {q.isError ? <ErrorView error={q.error} title="The sign-off queue could not be loaded" onRetry={() => void q.refetch()} /> : null}
      {q.data ? (
        <>
          {reviewer ? (
            <Card title={`Awaiting my sign-off (${q.data.awaiting.length})`}>
              {q.data.awaiting.length === 0 ? <EmptyState title="Nothing waits for you" body="Authors ask for a sign-off from a run page." /> : null}
              {q.data.awaiting.map(({ request, run }) => (
                <RunLine key={request.id} run={run} extra={`asked by ${request.requestedByName} on ${formatWhen(request.createdAt)}${request.note ? ` — “${request.note}”` : ''}`} />
              ))}
            </Card>
          ) : null}
          {q.data.requestedByMe.length > 0 || !reviewer ? (
            <Card title={`My open requests (${q.data.requestedByMe.length})`}>
              {q.data.requestedByMe.length === 0 ? <Text style={text.muted}>You have not asked for a sign-off.</Text> : null}
              {q.data.requestedByMe.map(({ request, run }) => (
                <RunLine key={request.id} run={run} extra={`waiting for ${request.reviewerName} since ${formatWhen(request.createdAt)}`} />
              ))}
            </Card>
          ) : null}
          <Card title="Recent decisions">
            {q.data.recent.length === 0 ? <Text style={text.muted}>No sign-offs yet.</Text> : null}
            {q.data.recent.map(({ signoff, run }) => (
              <RunLine
                key={signoff.id}
                run={run}
                extra={`${signoff.reviewerName}: ${signoff.decision === 'approved' ? 'approved' : 'changes requested'} on ${formatWhen(signoff.createdAt)}${signoff.note ? ` — “${signoff.note}”` : ''}`}
              />
            ))}
          </Card>
        </>
      ) : null}
    </Screen>
  );
}
