import type { TestApp } from './app.js';

/**
 * Every route of the app as "METHOD /path" (Express form, relative to the router it sits in:
 * the API's routes without the /api/v1 prefix), found by walking the Express router. The
 * client's catch-all routes (GET / and the regex fallback) are left out.
 */
export function listRoutes(app: TestApp['app']): string[] {
  const out: string[] = [];
  const walk = (stack: any[]) => {
    for (const l of stack) {
      if (l.route) for (const m of Object.keys(l.route.methods)) out.push(`${m.toUpperCase()} ${l.route.path}`);
      else if (l.handle?.stack) walk(l.handle.stack);
    }
  };
  walk((app as any).router.stack);
  return out.filter((r) => r !== 'GET /' && !r.startsWith('GET /^'));
}
