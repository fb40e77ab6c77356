import { desc, lt } from 'drizzle-orm';
import type { Db } from '../db/client';
import { auditLog } from '../db/schema/index';
import type { AuditPage, AuditPageQuery } from '../../shared/audit';

/** Records who did what. `detail` is stored as JSON text. */
export function audit(db: Db, userId: number | null, action: string, detail?: Record<string, unknown>): void {
  db.insert(auditLog).values({ userId, action, detail: detail ? JSON.stringify(detail) : null }).run();
}

/**
 * One page of the audit log, newest first, paged by id (ids only grow, so a page never shifts when
 * new entries arrive while someone reads older ones). Reads limit + 1 rows to know whether more exist.
 */
export function listAudit(db: Db, query: AuditPageQuery): AuditPage {
  const rows = db
    .select()
    .from(auditLog)
    .where(query.before === undefined ? undefined : lt(auditLog.id, query.before))
    .orderBy(desc(auditLog.id))
    .limit(query.limit + 1)
    .all();
  const entries = rows.slice(0, query.limit);
  return { entries, nextBefore: rows.length > query.limit ? entries[entries.length - 1].id : null };
}
