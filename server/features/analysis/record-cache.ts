/**
 * A small in-process cache of what is costly to read of write-once records: a dataset's series
 * and a run's decoded result (issue 16: a 100,000-point run's page and its figure requests each
 * read ~10 MB from PostgreSQL and parsed it again, ~0.7 s a request, and the page asks for its
 * figures in several requests at once).
 *
 * Why it cannot serve a stale value: it holds only records the database refuses to change or
 * delete — `datasets` and `analysis_runs` rows are write-once (triggers `*_write_once` and
 * `*_no_truncate`, drizzle/0003 and 0009) — keyed by their id, which a sequence never reuses.
 * Whether a record is retired, which study version a run belongs to, who may read it: all that
 * is read from the database on every request, and only after the organisation check has passed
 * does a caller look here. What is cached is frozen (deep `Object.freeze`), so no reader can
 * change what the next one reads. A process serves one database (`createApp`), so ids do not
 * collide.
 *
 * Least recently used entries go first once the cached records hold more than `budget` points
 * (a point's observation and its share of a result take some 300 bytes: 400,000 points ≈ 120 MB).
 * Concurrent reads of one record share one load; a failed load is not kept.
 *
 * Throws what the load throws.
 */

export const DEFAULT_POINT_BUDGET = 400_000;

interface Entry<T> {
  value: Promise<T>;
  weight: number;
}

export class RecordCache {
  private readonly entries = new Map<string, Entry<unknown>>();
  private held = 0;

  constructor(private readonly budget = DEFAULT_POINT_BUDGET) {}

  /** The cached value of `key`, else `load()`'s, frozen; `weigh` gives its size in points. */
  async get<T>(key: string, load: () => Promise<T>, weigh: (value: T) => number): Promise<T> {
    const found = this.entries.get(key) as Entry<T> | undefined;
    if (found) {
      // Most recently used last: a Map iterates in insertion order.
      this.entries.delete(key);
      this.entries.set(key, found);
      return found.value;
    }
    const entry: Entry<T> = { value: load().then(deepFreeze), weight: 0 };
    this.entries.set(key, entry);
    try {
      const value = await entry.value;
      if (this.entries.get(key) === entry) {
        entry.weight = weigh(value);
        this.held += entry.weight;
        this.evict();
      }
      return value;
    } catch (error) {
      if (this.entries.get(key) === entry) this.entries.delete(key);
      throw error;
    }
  }

  /** Points held now (for tests and the bench). */
  get heldPoints(): number {
    return this.held;
  }

  clear(): void {
    this.entries.clear();
    this.held = 0;
  }

  private evict(): void {
    for (const [key, entry] of this.entries) {
      if (this.held <= this.budget) return;
      // The newest entry stays even when it alone is over the budget: its readers are waiting.
      if (this.entries.size === 1) return;
      this.entries.delete(key);
      this.held -= entry.weight;
    }
  }
}

/** Freezes `value` and everything reachable from it; returns it. Buffers and typed arrays stay as they are. */
export function deepFreeze<T>(value: T): T {
  const stack: unknown[] = [value];
  while (stack.length > 0) {
    const next = stack.pop();
    if (next === null || typeof next !== 'object' || Object.isFrozen(next) || ArrayBuffer.isView(next))
      continue;
    Object.freeze(next);
    if (Array.isArray(next)) {
      for (const item of next) if (item !== null && typeof item === 'object') stack.push(item);
    } else {
      for (const key in next) {
        const item = (next as Record<string, unknown>)[key];
        if (item !== null && typeof item === 'object') stack.push(item);
      }
    }
  }
  return value;
}

/** The process's cache of write-once analysis records. */
export const analysisRecordCache = new RecordCache();
