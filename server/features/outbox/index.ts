/** What other features and the app may use from the outbox feature. */
export * from './outbox-routes.ts';
