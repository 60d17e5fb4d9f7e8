export * from './audit-events.ts';
export * from './memberships.ts';
export * from './organisations.ts';
export * from './rate-limit-hits.ts';
export * from './sessions.ts';
export * from './users.ts';
