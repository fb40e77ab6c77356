// One file per domain; this barrel is what drizzle-kit and the db client read.
export * from './auth';
export * from './runs';
export * from './libraries';
export * from './jobs';
