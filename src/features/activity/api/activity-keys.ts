import type { ActivityQuery } from '../../../../shared/api/activity.ts';

/** Query keys of the caller's own activity (a mutation that adds audit events invalidates `activityKeys.all`). */
export const activityKeys = {
  all: ['activity'] as const,
  list: (query: ActivityQuery) => [...activityKeys.all, query] as const,
};
