/** What other features and the app may use from the inbox feature. */
export * from './inbox-routes.ts';
