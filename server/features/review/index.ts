/** What other features and the app may use from the review feature. */

export * from './review.ts';
export * from './review-routes.ts';
