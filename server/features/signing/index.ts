/** What other features and the app may use from the signing feature. */
export * from './signed-output.ts';
export * from './verify-pdf.ts';
