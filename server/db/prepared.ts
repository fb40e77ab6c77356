/**
 * Drizzle prepared statements, one set per database handle. A plain Drizzle query builds its SQL
 * and asks SQLite to prepare it on every call; on the hot read paths (the session, the signed-in
 * user, GET /runs/:id, GET /libraries) that was a third of the request's CPU in a profile of the API
 * under 50 connections (bench/api-latency.bench.ts). `preparedFor(make)` builds the statement once
 * for each Db and hands back the same one after that.
 */
import type { Db } from './client';

export function preparedFor<T>(make: (db: Db) => T): (db: Db) => T {
  const cache = new WeakMap<Db, T>();
  return (db: Db) => {
    let p = cache.get(db);
    if (p === undefined) {
      p = make(db);
      cache.set(db, p);
    }
    return p;
  };
}
