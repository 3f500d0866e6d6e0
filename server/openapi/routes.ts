import path from 'node:path';
import { createRequire } from 'node:module';
import { fileURLToPath } from 'node:url';
import express, { type RequestHandler } from 'express';

const docsDir = path.join(path.dirname(fileURLToPath(import.meta.url)), 'docs');
const uiDist = path.dirname(createRequire(import.meta.url).resolve('swagger-ui-dist/package.json'));
/** The renderer's files we use; the rest of the package (its sample initializer, maps) is not served. */
const UI_FILES = new Set(['/swagger-ui.css', '/swagger-ui-bundle.js', '/favicon-16x16.png', '/favicon-32x32.png']);

/**
 * The docs page at /api/docs: our index.html and initializer (no inline script, for the CSP),
 * then the renderer's assets from node_modules/swagger-ui-dist. Static middleware only, so it
 * adds no route to the app.
 */
export function apiDocsPage(): RequestHandler[] {
  const ours = express.static(docsDir, { index: 'index.html', maxAge: '1h' });
  const theirs = express.static(uiDist, { index: false, maxAge: '1d' });
  return [ours, (req, res, next) => (UI_FILES.has(req.path) ? theirs(req, res, next) : next())];
}
