import type { Express } from 'express';
import { POLICY_MARK, type RoutePolicy } from '../../server/platform/auth/route-policy.ts';

interface Layer {
  route?: { path: string | string[]; methods: Record<string, boolean>; stack: { handle: unknown }[] };
  handle: unknown;
}

export interface RouteEntry {
  methods: string[];
  path: string;
  policy: RoutePolicy | null;
}

/** Every route registered in the app (nested routers included) with its declared policy, if any. */
export function routeInventory(app: Express): RouteEntry[] {
  const routerStack = (app as unknown as { router: { stack: Layer[] } }).router.stack;
  const entries: RouteEntry[] = [];
  const walk = (stack: Layer[]) => {
    for (const layer of stack) {
      if (layer.route) {
        const guard = layer.route.stack.find(
          (handler) => typeof handler.handle === 'function' && POLICY_MARK in (handler.handle as object),
        );
        entries.push({
          methods: Object.keys(layer.route.methods),
          path: String(layer.route.path),
          policy: guard ? ((guard.handle as Record<symbol, RoutePolicy>)[POLICY_MARK] ?? null) : null,
        });
      } else {
        const nested = (layer.handle as { stack?: Layer[] }).stack;
        if (Array.isArray(nested)) walk(nested);
      }
    }
  };
  walk(routerStack);
  return entries;
}
