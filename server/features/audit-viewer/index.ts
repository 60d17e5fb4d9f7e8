/** What other features and the app may use from the audit-viewer feature. */
export * from './audit-routes.ts';
