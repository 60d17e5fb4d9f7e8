/** What other features and the app may use from the verification feature. */
export * from './verification-routes.ts';
