/** What other features and the app may use from the settings feature. */
export * from './organisation-settings.ts';
export * from './password-policy.ts';
export * from './review-checklist.ts';
export * from './settings-routes.ts';
