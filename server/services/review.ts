/**
 * Review of runs: comments, sign-off requests (by the run's author, to a named reviewer) and
 * sign-offs (approved / changes requested) by reviewers and admins. Each action is one transaction
 * with its audit line; e-mails go out after the commit and never undo it.
 */
import { and, desc, eq, inArray, isNull } from 'drizzle-orm';
import type { Db } from '../db/client';
import { inTransaction } from '../db/client';
import { runComments, runs, signoffRequests, signoffs, users } from '../db/schema/index';
import { KeelsonApiError } from '../../shared/errors';
import type { User } from '../../shared/auth';
import type { ReviewQueue, RunComment, RunReview, Signoff, SignoffDecision, SignoffRequest } from '../../shared/runs';
import { findRunRow, getRun, mailInBackground, runSummariesByIds } from './runs';
import { canReadEdition } from './specs';
import { audit } from './audit';
import type { Mailer } from './mailer';

const REVIEWER_ROLES = ['reviewer', 'admin'] as const;

function names(db: Db, ids: number[]): Map<number, { name: string; email: string }> {
  if (ids.length === 0) return new Map();
  const rows = db.select({ id: users.id, name: users.name, email: users.email }).from(users).where(inArray(users.id, [...new Set(ids)])).all();
  return new Map(rows.map((r) => [r.id, { name: r.name, email: r.email }]));
}

function toRequests(db: Db, rows: (typeof signoffRequests.$inferSelect)[]): SignoffRequest[] {
  const n = names(db, rows.flatMap((r) => [r.reviewerId, r.requestedById]));
  return rows.map((r) => ({
    id: r.id,
    runId: r.runId,
    reviewerId: r.reviewerId,
    reviewerName: n.get(r.reviewerId)?.name ?? '',
    requestedById: r.requestedById,
    requestedByName: n.get(r.requestedById)?.name ?? '',
    note: r.note,
    answeredAt: r.answeredAt,
    createdAt: r.createdAt,
  }));
}

function toSignoffs(db: Db, rows: (typeof signoffs.$inferSelect)[]): Signoff[] {
  const n = names(
    db,
    rows.map((r) => r.reviewerId),
  );
  return rows.map((r) => ({
    id: r.id,
    runId: r.runId,
    reviewerId: r.reviewerId,
    reviewerName: n.get(r.reviewerId)?.name ?? '',
    decision: r.decision,
    note: r.note,
    createdAt: r.createdAt,
  }));
}

export function getReview(db: Db, user: User, runId: number): RunReview {
  const run = getRun(db, user, runId);
  const comments = db.select().from(runComments).where(eq(runComments.runId, runId)).orderBy(runComments.id).all();
  const n = names(
    db,
    comments.map((c) => c.authorId),
  );
  const commentsOut: RunComment[] = comments.map((c) => ({
    id: c.id,
    runId: c.runId,
    authorId: c.authorId,
    authorName: n.get(c.authorId)?.name ?? '',
    text: c.text,
    createdAt: c.createdAt,
  }));
  return {
    runId,
    state: run.signoff,
    comments: commentsOut,
    signoffs: toSignoffs(db, db.select().from(signoffs).where(eq(signoffs.runId, runId)).orderBy(signoffs.id).all()),
    requests: toRequests(db, db.select().from(signoffRequests).where(eq(signoffRequests.runId, runId)).orderBy(signoffRequests.id).all()),
  };
}

export function addComment(db: Db, user: User, runId: number, text: string): RunComment {
  findRunRow(db, user, runId);
  const row = inTransaction(db, (tx) => {
    const r = tx.insert(runComments).values({ runId, authorId: user.id, text }).returning().get();
    audit(tx, user.id, 'run.comment', { runId, commentId: r.id });
    return r;
  });
  return { id: row.id, runId, authorId: user.id, authorName: user.name, text: row.text, createdAt: row.createdAt };
}

function link(publicUrl: string | undefined, runId: number): string {
  return publicUrl ? `\n${publicUrl.replace(/\/$/, '')}/runs/${runId}\n` : '';
}

export function listReviewers(db: Db): { id: number; name: string; role: string }[] {
  return db
    .select({ id: users.id, name: users.name, role: users.role })
    .from(users)
    .where(and(inArray(users.role, [...REVIEWER_ROLES]), eq(users.active, true)))
    .orderBy(users.name)
    .all();
}

export function requestSignoff(
  db: Db,
  mailer: Mailer,
  user: User,
  runId: number,
  body: { reviewerId: number; note?: string },
  publicUrl?: string,
): SignoffRequest {
  const run = findRunRow(db, user, runId);
  if (run.authorId !== user.id) throw new KeelsonApiError('forbidden', 'Only the author of a run may request its sign-off');
  if (run.status !== 'finished') throw new KeelsonApiError('conflict', `Run ${runId} is ${run.status}; only finished runs can be signed off`);
  const reviewer = db.select().from(users).where(eq(users.id, body.reviewerId)).get();
  if (!reviewer || !reviewer.active || !(REVIEWER_ROLES as readonly string[]).includes(reviewer.role))
    throw new KeelsonApiError('unprocessable', `User ${body.reviewerId} is not an active reviewer`, [{ path: ['reviewerId'], message: 'Choose a reviewer' }]);
  if (reviewer.id === user.id) throw new KeelsonApiError('unprocessable', 'Ask someone else to sign off your run', [{ path: ['reviewerId'], message: 'Choose another reviewer' }]);
  if (!canReadEdition(db, { id: reviewer.id, email: reviewer.email, name: reviewer.name, role: reviewer.role }, run.editionId))
    throw new KeelsonApiError('unprocessable', `${reviewer.name} cannot read this run's library`, [{ path: ['reviewerId'], message: 'Choose a reviewer who can read the library' }]);
  const open = db
    .select()
    .from(signoffRequests)
    .where(and(eq(signoffRequests.runId, runId), eq(signoffRequests.reviewerId, reviewer.id), isNull(signoffRequests.answeredAt)))
    .get();
  if (open) throw new KeelsonApiError('conflict', `A sign-off from ${reviewer.name} is already requested for run ${runId}`);
  const row = inTransaction(db, (tx) => {
    const r = tx.insert(signoffRequests).values({ runId, reviewerId: reviewer.id, requestedById: user.id, note: body.note ?? null }).returning().get();
    audit(tx, user.id, 'run.signoff_requested', { runId, reviewerId: reviewer.id });
    return r;
  });
  mailInBackground(db, mailer, {
    to: reviewer.email,
    subject: `Sign-off requested: run #${runId}`,
    text:
      `${user.name} asks you to sign off run #${runId}${run.specName ? ` (“${run.specName}”)` : ''} on ${run.libraryName} edition ${run.editionNumber}.\n` +
      (body.note ? `\nNote: ${body.note}\n` : '') +
      link(publicUrl, runId),
  });
  return toRequests(db, [row])[0];
}

export function giveSignoff(
  db: Db,
  mailer: Mailer,
  user: User,
  runId: number,
  body: { decision: SignoffDecision; note?: string },
  publicUrl?: string,
): Signoff {
  const run = findRunRow(db, user, runId);
  if (run.status !== 'finished') throw new KeelsonApiError('conflict', `Run ${runId} is ${run.status}; only finished runs can be signed off`);
  if (run.authorId === user.id) throw new KeelsonApiError('forbidden', 'You cannot sign off a run you authored');
  const row = inTransaction(db, (tx) => {
    const r = tx.insert(signoffs).values({ runId, reviewerId: user.id, decision: body.decision, note: body.note ?? null }).returning().get();
    tx.update(signoffRequests)
      .set({ answeredAt: r.createdAt })
      .where(and(eq(signoffRequests.runId, runId), eq(signoffRequests.reviewerId, user.id), isNull(signoffRequests.answeredAt)))
      .run();
    audit(tx, user.id, 'run.signoff', { runId, decision: body.decision });
    return r;
  });
  const author = db.select().from(users).where(eq(users.id, run.authorId)).get();
  if (author) {
    const words = body.decision === 'approved' ? 'approved' : 'asked for changes to';
    mailInBackground(db, mailer, {
      to: author.email,
      subject: `Run #${runId} ${body.decision === 'approved' ? 'approved' : 'needs changes'}`,
      text: `${user.name} ${words} your run #${runId}${run.specName ? ` (“${run.specName}”)` : ''}.\n` + (body.note ? `\n${body.note}\n` : '') + link(publicUrl, runId),
    });
  }
  return toSignoffs(db, [row])[0];
}

/** The /review screen: pending requests to me, my pending requests, recent decisions I may read. */
export function reviewQueue(db: Db, user: User): ReviewQueue {
  const toMe = db
    .select()
    .from(signoffRequests)
    .where(and(eq(signoffRequests.reviewerId, user.id), isNull(signoffRequests.answeredAt)))
    .orderBy(desc(signoffRequests.id))
    .limit(200)
    .all();
  const byMe = db
    .select()
    .from(signoffRequests)
    .where(and(eq(signoffRequests.requestedById, user.id), isNull(signoffRequests.answeredAt)))
    .orderBy(desc(signoffRequests.id))
    .limit(200)
    .all();
  const recentRows = db.select().from(signoffs).orderBy(desc(signoffs.id)).limit(100).all();
  const runIds = [...new Set([...toMe, ...byMe, ...recentRows].map((r) => r.runId))];
  const summaries = runSummariesByIds(db, runIds);
  const editionOf = new Map(db.select({ id: runs.id, editionId: runs.editionId }).from(runs).where(inArray(runs.id, runIds.length ? runIds : [-1])).all().map((r) => [r.id, r.editionId]));
  const cache = new Map<number, boolean>();
  const readable = (runId: number) => {
    const ed = editionOf.get(runId);
    return ed !== undefined && canReadEdition(db, user, ed, cache);
  };
  const pair = (reqs: (typeof signoffRequests.$inferSelect)[]) =>
    toRequests(db, reqs.filter((r) => readable(r.runId))).map((request) => ({ request, run: summaries.get(request.runId)! }));
  return {
    awaiting: pair(toMe),
    requestedByMe: pair(byMe),
    recent: toSignoffs(
      db,
      recentRows.filter((r) => readable(r.runId)).slice(0, 30),
    ).map((signoff) => ({ signoff, run: summaries.get(signoff.runId)! })),
  };
}
