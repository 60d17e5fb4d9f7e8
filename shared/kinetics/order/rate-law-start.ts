/** Where a rate-law fit starts (`fitRateLaw`, `approachRateLawMinimum`, `startingValues`). */
export interface RateLawStart {
  initialValue: number;
  rateConstant: number;
  /** Starting order for the free-order model (ignored for integer orders). */
  n?: number;
}
