/** What other features and the app may use from the analysis feature. */
export * from './analysis-routes.ts';
export * from './analysis-runs.ts';
export * from './study-snapshot.ts';
