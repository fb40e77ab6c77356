import { sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { users } from '../db/schema/index';
import { createUser } from '../services/users';
import type { Role } from '../../shared/roles';

export const DEMO_PASSWORD = 'keelson-demo';

/** Invented demo people, one per role (documented in README). */
export const DEMO_USERS: ReadonlyArray<{ email: string; name: string; role: Role }> = [
  { email: 'admin@keelson.test', name: 'Ada Quarrier', role: 'admin' },
  { email: 'researcher@keelson.test', name: 'Rhea Tolland', role: 'researcher' },
  { email: 'reviewer@keelson.test', name: 'Ravi Okonedo', role: 'reviewer' },
  { email: 'desk@keelson.test', name: 'Dana Whitcombe', role: 'desk' },
];

/** Seeds the demo accounts, only into a database that has no users yet. Returns how many were added. */
export async function seedDemoUsers(db: Db): Promise<number> {
  const n = db.select({ n: sql<number>`count(*)` }).from(users).get()?.n ?? 0;
  if (n > 0) return 0;
  for (const u of DEMO_USERS) await createUser(db, { ...u, password: DEMO_PASSWORD });
  return DEMO_USERS.length;
}
