/** Query keys of the analysis screen. */
export const analysisKeys = {
  all: ['analysis-figures'] as const,
  /** One key per figures URL (one per run): all figure islands of a page share one request. */
  figures: (url: string | undefined) => [...analysisKeys.all, url ?? null] as const,
};
