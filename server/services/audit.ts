import { desc } from 'drizzle-orm';
import type { Db } from '../db/client';
import { auditLog } from '../db/schema/index';

/** Records who did what. `detail` is stored as JSON text. */
export function audit(db: Db, userId: number | null, action: string, detail?: Record<string, unknown>): void {
  db.insert(auditLog).values({ userId, action, detail: detail ? JSON.stringify(detail) : null }).run();
}

export function listAudit(db: Db, limit = 200) {
  return db.select().from(auditLog).orderBy(desc(auditLog.id)).limit(limit).all();
}
