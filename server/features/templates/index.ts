/** What other features and the app may use from the templates feature. */
export * from './template-admin-routes.ts';
