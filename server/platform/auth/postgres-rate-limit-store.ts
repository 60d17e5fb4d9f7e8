import type { IncrementResponse, Options, Store } from 'express-rate-limit';
import type pg from 'pg';

/**
 * An express-rate-limit store kept in PostgreSQL (table `rate_limit_hits`), so that the limit
 * holds across restarts and across several app instances.
 */
export class PostgresRateLimitStore implements Store {
  private windowMs = 60_000;
  readonly localKeys = false;

  constructor(
    private readonly pool: pg.Pool,
    readonly prefix = 'rl:',
  ) {}

  init(options: Options): void {
    this.windowMs = options.windowMs;
  }

  async increment(key: string): Promise<IncrementResponse> {
    const result = await this.pool.query<{ hits: number; reset_at: Date }>(
      `insert into rate_limit_hits (key, hits, reset_at)
         values ($1, 1, now() + make_interval(secs => $2::double precision / 1000))
       on conflict (key) do update set
         hits = case when rate_limit_hits.reset_at <= now() then 1 else rate_limit_hits.hits + 1 end,
         reset_at = case when rate_limit_hits.reset_at <= now()
                         then now() + make_interval(secs => $2::double precision / 1000)
                         else rate_limit_hits.reset_at end
       returning hits, reset_at`,
      [this.prefix + key, this.windowMs],
    );
    const row = result.rows[0]!;
    return { totalHits: row.hits, resetTime: row.reset_at };
  }

  async decrement(key: string): Promise<void> {
    await this.pool.query('update rate_limit_hits set hits = greatest(hits - 1, 0) where key = $1', [
      this.prefix + key,
    ]);
  }

  async resetKey(key: string): Promise<void> {
    await this.pool.query('delete from rate_limit_hits where key = $1', [this.prefix + key]);
  }
}
