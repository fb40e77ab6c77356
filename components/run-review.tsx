/** Review panel of a run: comments, sign-offs, requests; actions by role (the server enforces the same). */
import { useState } from 'react';
import { StyleSheet, Text, View } from 'react-native';
import type { User } from '../shared/auth';
import { SIGNOFF_STATE_LABELS, type Run, type SignoffDecision, type SignoffState } from '../shared/runs';
import { useAddComment, useGiveSignoff, useRequestSignoff, useReviewers, useRunReview } from '../hooks/use-runs';
import { Button } from './button';
import { Chip, type ChipShape, type ChipTone } from './chip';
import { ErrorView } from './error-view';
import { Select } from './select';
import { TextField } from './text-field';
import { formatWhen } from './format';
import { colors, radius, space, text } from './theme';

export const SIGNOFF_CHIP: Record<SignoffState, { shape: ChipShape; tone: ChipTone }> = {
  none: { shape: 'dashed', tone: 'fog' },
  requested: { shape: 'outlined', tone: 'brass' },
  approved: { shape: 'filled', tone: 'kelp' },
  'changes-requested': { shape: 'outlined', tone: 'rust' },
};

export function SignoffChip({ state }: { state: SignoffState }) {
  return <Chip label={SIGNOFF_STATE_LABELS[state]} {...SIGNOFF_CHIP[state]} accessibilityLabel={`Sign-off: ${SIGNOFF_STATE_LABELS[state]}`} />;
}

export function RunReview({ run, me }: { run: Run; me: User }) {
  const review = useRunReview(run.id);
  const comment = useAddComment(run.id);
  const signoff = useGiveSignoff(run.id);
  const request = useRequestSignoff(run.id);
  const isReviewer = me.role === 'reviewer' || me.role === 'admin';
  const isAuthor = run.authorId === me.id && (me.role === 'researcher' || me.role === 'admin');
  const reviewers = useReviewers(isAuthor);
  const [text_, setText] = useState('');
  const [note, setNote] = useState('');
  const [requestNote, setRequestNote] = useState('');
  const [reviewerId, setReviewerId] = useState<string | undefined>(undefined);

  if (review.isPending) return <Text style={text.muted}>Loading the review…</Text>;
  if (review.isError) return <ErrorView error={review.error} title="The review could not be loaded" onRetry={() => void review.refetch()} />;
  const r = review.data;
  const finished = run.status === 'finished';
  const sign = (decision: SignoffDecision) => signoff.mutateAsync({ decision, note: note.trim() || undefined }).then(() => setNote(''));

  return (
    <View style={{ gap: space.md }}>
      <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' }}>
        <Text style={text.label}>State</Text>
        <SignoffChip state={r.state} />
      </View>
      {r.signoffs.length > 0 ? (
        <View style={{ gap: space.xs }} aria-label="Sign-offs">
          {r.signoffs.map((s) => (
            <View key={s.id} style={styles.item}>
              <Text style={text.strong}>
                {s.reviewerName}: {s.decision === 'approved' ? 'approved' : 'changes requested'}
              </Text>
              {s.note ? <Text style={text.body}>{s.note}</Text> : null}
              <Text style={text.muted}>{formatWhen(s.createdAt)}</Text>
            </View>
          ))}
        </View>
      ) : null}
      {r.requests.filter((q) => !q.answeredAt).map((q) => (
        <Text key={q.id} style={text.muted}>
          Sign-off requested from {q.reviewerName} by {q.requestedByName} on {formatWhen(q.createdAt)}
          {q.note ? ` — “${q.note}”` : ''}
        </Text>
      ))}
      <View style={{ gap: space.xs }} aria-label="Comments">
        <Text style={text.label}>Comments ({r.comments.length})</Text>
        {r.comments.length === 0 ? <Text style={text.muted}>No comments yet.</Text> : null}
        {r.comments.map((c) => (
          <View key={c.id} style={styles.item}>
            <Text style={text.body}>{c.text}</Text>
            <Text style={text.muted}>
              {c.authorName} · {formatWhen(c.createdAt)}
            </Text>
          </View>
        ))}
      </View>
      {isReviewer ? (
        <View style={styles.form}>
          <TextField label="Comment" value={text_} onChangeText={setText} multiline placeholder="What should the author look at?" />
          <Button
            label="Add comment"
            compact
            busy={comment.isPending}
            disabled={!text_.trim()}
            onPress={() => comment.mutateAsync(text_.trim()).then(() => setText(''))}
          />
          {comment.isError ? <ErrorView error={comment.error} title="The comment was not saved" /> : null}
        </View>
      ) : null}
      {isReviewer && finished && run.authorId !== me.id ? (
        <View style={styles.form}>
          <TextField label="Sign-off note (optional)" value={note} onChangeText={setNote} multiline />
          <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
            {/* Both buttons wait for either decision: one sign-off per press, never two. */}
            <Button label="Approve" variant="primary" busy={signoff.isPending} onPress={() => sign('approved')} />
            <Button label="Request changes" variant="danger" busy={signoff.isPending} onPress={() => sign('changes-requested')} />
          </View>
          <Text style={text.muted}>A sign-off says the method and evidence hold up; the results stay statistical evidence, not investment advice.</Text>
          {signoff.isError ? <ErrorView error={signoff.error} title="The sign-off was not saved" /> : null}
        </View>
      ) : null}
      {isAuthor && finished ? (
        <View style={styles.form}>
          {reviewers.data && reviewers.data.filter((x) => x.id !== me.id).length > 0 ? (
            <Select
              label="Ask for a sign-off from"
              value={reviewerId}
              options={reviewers.data.filter((x) => x.id !== me.id).map((x) => ({ value: String(x.id), label: `${x.name} (${x.role})` }))}
              onChange={setReviewerId}
            />
          ) : (
            <Text style={text.muted}>{reviewers.isPending ? 'Loading reviewers…' : 'No reviewer to ask.'}</Text>
          )}
          <TextField
            label="Note for the reviewer (optional)"
            value={requestNote}
            onChangeText={setRequestNote}
            multiline
            maxLength={1000}
            placeholder="What should they look at first?"
            hint="Goes into the e-mail and shows beside the request."
          />
          <Button
            label="Request sign-off"
            compact
            busy={request.isPending}
            disabled={!reviewerId}
            onPress={() => request.mutateAsync({ reviewerId: Number(reviewerId), note: requestNote.trim() || undefined }).then(() => setRequestNote(''))}
          />
          {request.isError ? <ErrorView error={request.error} title="The request was not sent" /> : null}
          {request.isSuccess ? (
            <Text style={text.muted} role="status">
              Request sent; the reviewer gets an e-mail.
            </Text>
          ) : null}
        </View>
      ) : null}
      {!isReviewer && !isAuthor ? <Text style={text.muted}>Reviewers comment and sign off; the run’s author asks for a sign-off.</Text> : null}
    </View>
  );
}

const styles = StyleSheet.create({
  item: { borderLeftWidth: 3, borderLeftColor: colors.rule, paddingLeft: space.sm, gap: 2 },
  form: { gap: space.sm, borderTopWidth: 1, borderTopColor: colors.rule, paddingTop: space.md, borderRadius: radius.sm },
});
