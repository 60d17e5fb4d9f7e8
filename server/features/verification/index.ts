/** What other features and the app may use from the verification feature. */
export * from './public-verification-routes.ts';
export * from './verification-routes.ts';
