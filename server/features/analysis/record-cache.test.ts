import { describe, expect, it } from 'vitest';
import { deepFreeze, RecordCache } from './record-cache.ts';

// The cache of write-once records (issue 16): one load per key however many readers, nothing
// changeable by a reader, least recently used out first past the budget, failures not kept.
// Common practice (an LRU cache with request coalescing); no outside reference.

describe('RecordCache', () => {
  it('loads a record once for concurrent and later readers', async () => {
    const cache = new RecordCache(100);
    let loads = 0;
    const load = async () => {
      loads += 1;
      await new Promise((resolve) => setTimeout(resolve, 5));
      return { points: [1, 2, 3] };
    };
    const [a, b] = await Promise.all([cache.get('k', load, () => 3), cache.get('k', load, () => 3)]);
    const c = await cache.get('k', load, () => 3);
    expect(loads).toBe(1);
    expect(a).toBe(b);
    expect(c).toBe(a);
    expect(cache.heldPoints).toBe(3);
  });

  it('hands out frozen values, so no reader changes what the next reads', async () => {
    const cache = new RecordCache(100);
    const value = await cache.get(
      'k',
      async () => ({ series: [{ observations: [{ time: 0 }] }] }),
      () => 1,
    );
    expect(() => {
      (value.series[0]!.observations as { time: number }[]).push({ time: 1 });
    }).toThrow(TypeError);
    expect(() => {
      (value.series[0]!.observations[0] as { time: number }).time = 5;
    }).toThrow(TypeError);
    expect(value.series[0]!.observations).toEqual([{ time: 0 }]);
  });

  it('drops the least recently used records once over its budget of points', async () => {
    const cache = new RecordCache(10);
    let loads = 0;
    const load = (name: string) => async () => {
      loads += 1;
      return name;
    };
    await cache.get('a', load('a'), () => 4);
    await cache.get('b', load('b'), () => 4);
    await cache.get('a', load('a'), () => 4); // a is now the most recent
    await cache.get('c', load('c'), () => 4); // 12 > 10: b goes
    expect(cache.heldPoints).toBe(8);
    expect(loads).toBe(3);
    await cache.get('a', load('a'), () => 4);
    expect(loads).toBe(3);
    await cache.get('b', load('b'), () => 4);
    expect(loads).toBe(4);
  });

  it('keeps no failed load, so the next reader tries again', async () => {
    const cache = new RecordCache(10);
    await expect(
      cache.get(
        'k',
        async () => Promise.reject(new Error('database unreachable')),
        () => 1,
      ),
    ).rejects.toThrow('database unreachable');
    expect(
      await cache.get(
        'k',
        async () => 'read',
        () => 1,
      ),
    ).toBe('read');
  });

  it('deepFreeze freezes nested objects and leaves buffers as they are (typed arrays cannot be frozen)', () => {
    const value = deepFreeze({ nested: { list: [{ a: 1 }] }, bytes: Buffer.from([1, 2]) });
    expect(Object.isFrozen(value.nested.list[0])).toBe(true);
    expect(Object.isFrozen(value.bytes)).toBe(false);
  });
});
