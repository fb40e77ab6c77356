import type { Db } from '../db/client';
import { seedDemoUsers } from './users';

/**
 * Seeds Keelson's invented demo data into an empty database: one account per role and (once
 * return libraries exist) the invented demo libraries. Safe to call on every start.
 */
export async function seedDemo(db: Db): Promise<{ users: number }> {
  const users = await seedDemoUsers(db);
  return { users };
}
