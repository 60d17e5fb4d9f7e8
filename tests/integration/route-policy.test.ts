import express from 'express';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { requireRole } from '../../server/platform/auth/route-policy.ts';
import { routeInventory } from '../support/route-inventory.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
beforeAll(async () => {
  world = await createTestWorld({});
});
afterAll(() => world.close());

describe('route policies', () => {
  it('every route of the app declares who may call it', () => {
    const routes = routeInventory(world.app);
    expect(routes.length).toBeGreaterThan(5);
    const undeclared = routes
      .filter((route) => route.policy === null)
      .map((route) => `${route.methods.join(',')} ${route.path}`);
    expect(undeclared).toEqual([]);
  });

  it('the inventory does catch a route without a policy (the check can fail)', () => {
    const app = express();
    app.get('/guarded', requireRole('admin'), (_req, res) => res.end());
    app.get('/forgotten', (_req, res) => res.end());
    const undeclared = routeInventory(app).filter((route) => route.policy === null);
    expect(undeclared.map((route) => route.path)).toEqual(['/forgotten']);
  });

  it('admin-only routes are declared admin-only', () => {
    const adminRoutes = routeInventory(world.app).filter((route) => route.path.includes('admin'));
    expect(adminRoutes.length).toBeGreaterThan(0);
    for (const route of adminRoutes) expect(route.policy).toEqual({ kind: 'roles', roles: ['admin'] });
  });
});
