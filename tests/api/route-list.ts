import type { Express } from 'express';

interface Layer {
  route?: { path: string | string[]; methods: Record<string, boolean> };
  handle?: { stack?: Layer[] };
  rawPath?: unknown;
}

/**
 * Every route mounted on an Express 5 app as "METHOD /path": walks app.router.stack and the stacks
 * of nested routers, prefixing the path each router was mounted at.
 */
export function listRoutes(app: Express): string[] {
  const out: string[] = [];
  const walk = (stack: Layer[], prefix: string) => {
    for (const layer of stack) {
      if (layer.route) {
        const paths = Array.isArray(layer.route.path) ? layer.route.path : [layer.route.path];
        for (const p of paths) {
          for (const [method, on] of Object.entries(layer.route.methods)) {
            if (on && method !== '_all') out.push(`${method.toUpperCase()} ${prefix}${p}`);
          }
        }
      } else if (layer.handle?.stack) {
        const mount = typeof layer.rawPath === 'string' && layer.rawPath !== '/' ? layer.rawPath : '';
        walk(layer.handle.stack, prefix + mount);
      }
    }
  };
  walk((app as unknown as { router: { stack: Layer[] } }).router.stack, '');
  return [...new Set(out)].sort();
}
