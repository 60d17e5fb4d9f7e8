/** What other features and the app may use from the dashboard feature. */
export * from './api-routes.ts';
export * from './page-routes.ts';
