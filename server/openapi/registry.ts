import { adminRoutes } from '../admin/routes.js';
import { authRoutes } from '../auth/routes.js';
import { calibrationRoutes } from '../calibration/routes.js';
import { catalogRoutes } from '../catalog/routes.js';
import { instrumentRoutes } from '../instruments/routes.js';
import { intakeRoutes } from '../intake/routes.js';
import { mailRoutes } from '../mail/routes.js';
import { maskRoutes } from '../masks/routes.js';
import { releaseRoutes } from '../releases/routes.js';
import { reviewRoutes } from '../review/routes.js';
import { tokenRoutes } from '../tokens/routes.js';
import { tomographyRoutes } from '../tomography/routes.js';
import { route, type RouteSpec } from '../lib/route.js';
import { openApiDocument } from './document.js';

/** The service's own routes: is it up, and this document. */
export const serviceRoutes = [
  route({
    method: 'get', path: '/health', tag: 'Service', who: 'anyone',
    summary: 'Is the API up?',
    responses: { 200: { description: 'the API answers', schema: 'responses/health' } },
    handler: () => ({ ok: true }),
  }),
  route({
    method: 'get', path: '/openapi.json', tag: 'Service', who: 'anyone',
    summary: 'This OpenAPI 3.1 document',
    description: 'Generated from the route declarations (server/*/routes.ts) and the schemas the server validates with; rendered for people at /api/docs.',
    responses: { 200: { description: 'the document', schema: 'responses/openapi' } },
    handler: () => openApiDocument(),
  }),
];

/**
 * Every capability's route declarations, by capability. server/app.ts mounts each group with its
 * services; document.ts builds the OpenAPI document from all of them. A group added here and not
 * mounted (or mounted and not added) fails tests/api/route-mount.test.ts.
 */
export const ROUTE_GROUPS = {
  service: serviceRoutes,
  auth: authRoutes,
  admin: adminRoutes,
  instruments: instrumentRoutes,
  catalog: catalogRoutes,
  intake: intakeRoutes,
  review: reviewRoutes,
  tomography: tomographyRoutes,
  releases: releaseRoutes,
  mail: mailRoutes,
  tokens: tokenRoutes,
  masks: maskRoutes,
  calibration: calibrationRoutes,
} as const;

/** All declarations under /api/v1, in the order they are mounted. */
export function allRoutes(): RouteSpec[] {
  return Object.values(ROUTE_GROUPS).flat() as RouteSpec[];
}
