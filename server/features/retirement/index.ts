/** What other features and the app may use from the retirement feature. */
export * from './retirement.ts';
export * from './retirement-routes.ts';
