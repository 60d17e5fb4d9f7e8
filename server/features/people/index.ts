/** What other features and the app may use from the people feature. */
export * from './account-routes.ts';
export * from './auth-routes.ts';
export * from './people.ts';
export * from './user-admin-routes.ts';
