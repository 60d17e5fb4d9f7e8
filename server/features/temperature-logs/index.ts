/** What other features and the app may use from the temperature-log feature. */
export * from './temperature-log-assessments.ts';
export * from './temperature-log-routes.ts';
