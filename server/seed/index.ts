import type { Db } from '../db/client';
import { seedDemoUsers } from './users';
import { seedDemoLibraries } from './demo-libraries';

/**
 * Seeds Keelson's invented demo data into an empty database: one account per role and the
 * invented demo return libraries (only while no library exists). Safe to call on every start.
 */
export async function seedDemo(db: Db): Promise<{ users: number; libraries: number }> {
  const users = await seedDemoUsers(db);
  const libraries = seedDemoLibraries(db);
  return { users, libraries };
}
