/**
 * The routes an Express app has registered, found by walking Express 5's router stacks
 * (a mounted router's layer carries rawPath; a route's layer carries route.path), with the
 * access rule its first handler carries (server/auth/access.ts).
 */
import type { Express } from 'express';
import { ruleOf, type AccessRule } from '../../server/auth/access';

/** One registered method and path. */
export interface FoundRoute {
  method: string;
  path: string;
  rule: AccessRule | undefined;
}

/* eslint-disable @typescript-eslint/no-explicit-any -- Express keeps its router stack untyped */
/** Every method and full path the app answers, in registration order. */
export function listRoutes(app: Express): FoundRoute[] {
  const out: FoundRoute[] = [];
  const walk = (stack: any[], prefix: string) => {
    for (const layer of stack) {
      if (layer.route) {
        const first = layer.route.stack[0]?.handle;
        for (const m of Object.keys(layer.route.methods)) {
          if (m === '_all') continue;
          out.push({ method: m.toUpperCase(), path: prefix + layer.route.path, rule: ruleOf(first) });
        }
      } else if (layer.name === 'router' && layer.handle?.stack) {
        const mount = layer.rawPath && layer.rawPath !== '/' ? layer.rawPath : '';
        walk(layer.handle.stack, prefix + mount);
      }
    }
  };
  walk((app as any).router.stack, '');
  return out;
}
/* eslint-enable @typescript-eslint/no-explicit-any */
