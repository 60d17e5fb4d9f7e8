/** What other features and the app may use from the studies feature. */
export * from './studies.ts';
export { attributeListChanges } from './study-attribute-changes.ts';
export * from './study-routes.ts';
export * from './study-versions.ts';
