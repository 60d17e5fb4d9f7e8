/** What other features and the app may use from the audit-viewer feature. */
export * from './audit-routes.ts';
export { installChainCheckQueue } from './chain-check-queue.ts';
export { startChainCheckWorker, startInProcessChainCheckWorker } from './chain-check-worker.ts';
