/** Audit log paging: `GET /api/v1/admin/audit?before=&limit=` (admin), newest first. */
import { z } from 'zod';
import { auditEntrySchema } from './auth';

export const AUDIT_PAGE_DEFAULT = 50;
export const AUDIT_PAGE_MAX = 200;

const positiveInt = (what: string) =>
  z.coerce.number({ error: `${what} must be a whole number` }).int(`${what} must be a whole number`).positive(`${what} must be positive`);

/** Query string: `before` = an entry id (only older entries come back); `limit` = page size. */
export const auditPageQuerySchema = z.object({
  before: positiveInt('before').optional(),
  limit: positiveInt('limit').max(AUDIT_PAGE_MAX, `limit is at most ${AUDIT_PAGE_MAX}`).default(AUDIT_PAGE_DEFAULT),
});
export type AuditPageQuery = z.infer<typeof auditPageQuerySchema>;

/** One page; `nextBefore` is the `before` of the next older page, null when this page reaches the oldest entry. */
export const auditPageResponseSchema = z.object({
  entries: z.array(auditEntrySchema),
  nextBefore: z.number().int().positive().nullable(),
});
export type AuditPage = z.infer<typeof auditPageResponseSchema>;
export type AuditEntry = AuditPage['entries'][number];

/** Names the audit text may use in place of bare ids (each optional: unknown ids read "user 7"). */
export interface AuditNames {
  user?: (id: number) => string | undefined;
}

/** An audit entry in words: one sentence for a known kind, else `key: value` lines of its detail. */
export interface AuditText {
  sentence: string | null;
  lines: string[];
}

type Detail = Record<string, unknown>;

const str = (v: unknown): string | undefined => (typeof v === 'string' && v.length > 0 ? v : undefined);
const int = (v: unknown): number | undefined => (typeof v === 'number' && Number.isInteger(v) ? v : undefined);
const quoted = (s: string) => `“${s}”`;

const ROLE_WORDS: Record<string, string> = { admin: 'Admin', researcher: 'Researcher', reviewer: 'Reviewer', desk: 'Desk' };
const JOB_WORDS: Record<string, string> = { bootstrap: 'bootstrap', 'subset-sweep': 'subset sweep', rolling: 'rolling window' };

/** One describer per action kind; null when the detail lacks what the sentence needs (then: lines). */
const SENTENCES: Record<string, (who: string, d: Detail, person: (id: number) => string) => string | null> = {
  'auth.login': (who) => `${who} signed in.`,
  'auth.logout': (who) => `${who} signed out.`,
  'auth.login_failed': (_who, d) =>
    str(d.email) ? `A sign-in as ${d.email} failed: wrong password, unknown e-mail or deactivated account.` : 'A sign-in failed.',
  'auth.password_change': (who, d) => {
    const n = int(d.endedSessions);
    const ended = n ? `; ${n === 1 ? 'one other session was' : `${n} other sessions were`} signed out` : '';
    return `${who} changed their password${ended}.`;
  },
  'invitation.create': (who, d) => {
    const email = str(d.email);
    const role = str(d.role);
    return email && role ? `${who} invited ${email} as ${ROLE_WORDS[role] ?? role}.` : null;
  },
  'invitation.accept': (who, d) => (int(d.invitationId) ? `${who} accepted invitation #${d.invitationId} and set a password.` : null),
  'user.update': (who, d, person) => {
    const id = int(d.userId);
    if (!id) return null;
    const target = person(id);
    const parts: string[] = [];
    if (str(d.role)) parts.push(`changed the role of ${target} to ${ROLE_WORDS[d.role as string] ?? String(d.role)}`);
    if (d.active === false) parts.push(`deactivated ${target}`);
    if (d.active === true) parts.push(`reactivated ${target}`);
    return parts.length ? `${who} ${parts.join(' and ')}.` : null;
  },
  'spec.create': (who, d) => (int(d.specId) ? `${who} saved model spec #${d.specId}.` : null),
  'spec.copy': (who, d) =>
    int(d.specId) ? `${who} copied model spec ${int(d.copiedFromId) ? `#${d.copiedFromId} ` : ''}as #${d.specId}.` : null,
  'spec.update': (who, d) => (int(d.specId) ? `${who} edited model spec #${d.specId}.` : null),
  'spec.archive': (who, d) => (int(d.specId) ? `${who} archived model spec #${d.specId}.` : null),
  'spec.restore': (who, d) => (int(d.specId) ? `${who} restored model spec #${d.specId}.` : null),
  'run.queued': (who, d) => runSentence(who, d, 'it is large, so it was queued for a worker'),
  'run.finished': (who, d) =>
    d.queued === true && int(d.runId) ? `Run #${d.runId} of ${who} finished on a worker.` : runSentence(who, d, 'it finished'),
  'run.failed': (who, d) =>
    d.queued === true && int(d.runId)
      ? `Run #${d.runId} of ${who} failed on a worker and is stored as failed.`
      : runSentence(who, d, 'the data refused the model, so it is stored as failed'),
  'run.cancelled': (who, d) => (int(d.runId) ? `${who} cancelled run #${d.runId} before it was estimated.` : null),
  'run.comment': (who, d) => (int(d.runId) ? `${who} commented on run #${d.runId}.` : null),
  'run.signoff_requested': (who, d, person) =>
    int(d.runId) && int(d.reviewerId) ? `${who} asked ${person(d.reviewerId as number)} to sign off run #${d.runId}.` : null,
  'run.signoff': (who, d) => {
    if (!int(d.runId)) return null;
    if (d.decision === 'approved') return `${who} approved run #${d.runId}.`;
    if (d.decision === 'changes-requested') return `${who} requested changes to run #${d.runId}.`;
    return null;
  },
  'library.edition_added': (who, d) => {
    const name = str(d.libraryName);
    const edition = int(d.edition);
    if (!name || !edition) return null;
    const what = d.newLibrary === true ? `created library ${quoted(name)} with edition ${edition}` : `added edition ${edition} to library ${quoted(name)}`;
    const from = str(d.file) ? ` from ${d.file}` : '';
    const size = int(d.rows) !== undefined && int(d.series) !== undefined ? `: ${d.rows} rows, ${d.series} series` : '';
    const units = str(d.units) ? `${size ? ', ' : ': '}in ${d.units}` : '';
    return `${who} ${what}${from}${size}${units}.`;
  },
  'library.published': (who, d) => (str(d.name) ? `${who} shared library ${quoted(d.name as string)} with everyone.` : null),
  'library.unpublished': (who, d) => (str(d.name) ? `${who} made library ${quoted(d.name as string)} private again.` : null),
  'library.archived': (who, d) => (str(d.name) ? `${who} archived library ${quoted(d.name as string)}.` : null),
  'library.restored': (who, d) => (str(d.name) ? `${who} restored library ${quoted(d.name as string)}.` : null),
  'library.edition_deleted': (who, d) =>
    str(d.name) && int(d.edition) ? `${who} deleted edition ${d.edition} of library ${quoted(d.name as string)}.` : null,
  'job.started': (who, d) =>
    int(d.jobId) && int(d.runId) && str(d.kind)
      ? `${who} started a ${JOB_WORDS[d.kind as string] ?? String(d.kind)} check on run #${d.runId} (job #${d.jobId}).`
      : null,
  'job.cancelled': (who, d) => (int(d.jobId) ? `${who} cancelled job #${d.jobId}.` : null),
  'job.restarted': (who, d) =>
    int(d.jobId) ? `${who} restarted job #${d.jobId}${int(d.attempt) ? ` (attempt ${d.attempt})` : ''}.` : null,
};

function runSentence(who: string, d: Detail, outcome: string): string | null {
  if (!int(d.runId)) return null;
  const from = int(d.specId) ? ` from model spec #${d.specId}` : ' from an unsaved spec';
  return `${who} started run #${d.runId}${from}; ${outcome}.`;
}

function valueText(v: unknown): string {
  if (v === null || v === undefined) return '—';
  if (typeof v === 'string') return v;
  if (typeof v === 'number' || typeof v === 'boolean') return String(v);
  return JSON.stringify(v);
}

/** `key: value` per field of the detail (nested values as compact JSON); a non-JSON detail as it is. */
export function auditDetailLines(detail: string | null): string[] {
  if (detail === null || detail === '') return [];
  let parsed: unknown;
  try {
    parsed = JSON.parse(detail);
  } catch {
    return [detail];
  }
  if (parsed === null || typeof parsed !== 'object' || Array.isArray(parsed)) return [valueText(parsed)];
  return Object.entries(parsed as Detail).map(([k, v]) => `${k}: ${valueText(v)}`);
}

/**
 * An audit entry in words for the Team → Audit log screen: "Ada Quarrier invited … as Reviewer."
 * Kinds without a sentence here (or an entry whose detail lacks the fields) fall back to
 * `auditDetailLines`, so nothing recorded is hidden.
 */
export function describeAuditEntry(entry: Pick<AuditEntry, 'action' | 'detail' | 'userId'>, names: AuditNames = {}): AuditText {
  const person = (id: number) => names.user?.(id) ?? `user ${id}`;
  const who = entry.userId === null ? 'Someone not signed in' : person(entry.userId);
  const lines = auditDetailLines(entry.detail);
  const describe = SENTENCES[entry.action];
  if (!describe) return { sentence: null, lines };
  let detail: Detail = {};
  if (entry.detail) {
    try {
      const p: unknown = JSON.parse(entry.detail);
      if (p && typeof p === 'object' && !Array.isArray(p)) detail = p as Detail;
      else return { sentence: null, lines };
    } catch {
      return { sentence: null, lines };
    }
  }
  const sentence = describe(who, detail, person);
  return sentence ? { sentence, lines: [] } : { sentence: null, lines };
}
