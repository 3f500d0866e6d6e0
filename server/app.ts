import fs from 'node:fs';
import path from 'node:path';
import express, { type Express } from 'express';
import session from 'express-session';
import helmet from 'helmet';
import type { Knex } from 'knex';
import type { Config } from './config.js';
import { errorMiddleware, notFound } from './errors.js';
import { SessionStore } from './session-store.js';
import { openDb } from './db.js';
import { authService } from './auth/service.js';
import { createPassport } from './auth/passport.js';
import { catalogService } from './catalog/service.js';
import { instrumentService } from './instruments/service.js';
import { intakeService, type IntakeService } from './intake/service.js';
import { measurementService, type MeasurementService } from './measurements/service.js';
import { reviewService, type ReviewService } from './review/service.js';
import { tomographyService, type TomographyService } from './tomography/service.js';
import { releaseService, type ReleaseService } from './releases/service.js';
import { notifyCuratorsOfNewBatch, notifyUploaderOfDecision } from './mail/notifications.js';
import { createMailer, type Mailer } from './mail/transport.js';
import { passwordResetService } from './mail/passwordReset.js';
import { tokenService, type TokenService } from './tokens/service.js';
import { bearerTokenAuth } from './tokens/middleware.js';
import { sameOriginWrites } from './auth/origin.js';
import { skyService } from './masks/service.js';
import { apiDocsPage } from './openapi/routes.js';
import { ROUTE_GROUPS } from './openapi/registry.js';
import { mountRoutes } from './lib/route.js';
import { calibrationService, plausibilityService } from './calibration/index.js';

export interface AppDeps {
  db: Knex;
  /** a second connection for reads that must not wait behind a long write (defaults to db) */
  readDb?: Knex;
  /** the session store's own connection (default: one opened here on config.dbFile) */
  sessionDb?: Knex;
  config: Config;
}

export interface AppServices {
  intake: IntakeService;
  mail: Mailer;
  tomography: TomographyService;
  review: ReviewService;
  measurements: MeasurementService;
  releases: ReleaseService;
  tokens: TokenService;
  /** end background work and the connections the app opened itself */
  close: () => Promise<void>;
}

/** Build the Express app without listening, so tests can drive it with supertest. */
export function createApp(deps: AppDeps): Express & { services: AppServices } {
  const { db, config } = deps;
  // sessions are read and written on every signed-in request: a connection of their own
  const sessionDb = deps.sessionDb ?? (config.dbFile === ':memory:' ? db : openDb(config.dbFile));
  const app = express();
  app.set('trust proxy', config.trustProxy); // TRUST_PROXY; off unless configured
  app.disable('x-powered-by');
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          styleSrc: ["'self'", "'unsafe-inline'"],
          fontSrc: ["'self'", 'data:'],
          scriptSrc: ["'self'"],
          connectSrc: ["'self'"],
          upgradeInsecureRequests: null,
        },
      },
    }),
  );

  const auth = authService(db, { allowDemoPassword: config.allowDemoPassword, bcryptCost: config.bcryptCost });
  const pp = createPassport(auth);
  const mailer = createMailer(db, config);
  // e-mail is sent after the change has committed and never holds up the request
  const intake = intakeService(db, config, config.intake, deps.readDb ?? db, (batch) => notifyCuratorsOfNewBatch(mailer, db, batch));
  const measurements = measurementService(db, { crossmatchArcsec: config.intake.crossmatchArcsec });
  const review = reviewService(db, deps.readDb ?? db, notifyUploaderOfDecision(mailer, db), { dbFile: config.dbFile });
  const tomography = tomographyService(db, deps.readDb ?? db);
  const releases = releaseService(db, deps.readDb ?? db);
  const tokens = tokenService(db, deps.readDb ?? db);
  const sky = skyService(deps.readDb ?? db, tomography);

  const api = express.Router();
  api.use(sameOriginWrites(config)); // cookie writes only from this site's pages (server/auth/origin.ts)
  api.use(express.json({ limit: '2mb' }));
  api.use(
    session({
      name: 'starveil.sid',
      secret: config.sessionSecret,
      resave: false,
      saveUninitialized: false,
      rolling: true,
      store: new SessionStore(sessionDb),
      cookie: { httpOnly: true, sameSite: 'lax', secure: config.env === 'production', maxAge: 8 * 60 * 60 * 1000 },
    }),
  );
  api.use(pp.initialize());
  api.use(pp.session());
  // Authorization: Bearer <personal API token> → req.user for GET routes (server/tokens/middleware.ts)
  api.use(bearerTokenAuth({ tokens, config }));

  // every route is a declaration (server/<capability>/routes.ts, listed in server/openapi/registry.ts),
  // mounted with the services it needs; the OpenAPI document is generated from the same declarations
  const calibration = calibrationService(db, deps.readDb ?? db);
  // a calibration a stopped server left part-way applied (or reverted) is put right from its stored values
  calibration.recover().catch((e) => console.error('calibration recovery', e));
  const g = ROUTE_GROUPS;
  mountRoutes(api, g.service, {});
  mountRoutes(api, g.auth, { auth, passport: pp, config });
  mountRoutes(api, g.admin, { auth });
  mountRoutes(api, g.instruments, { instruments: instrumentService(db, deps.readDb ?? db) });
  mountRoutes(api, g.catalog, { db, catalog: catalogService(db) });
  mountRoutes(api, g.intake, { intake, config });
  mountRoutes(api, g.review, { db, review, measurements });
  mountRoutes(api, g.tomography, { tomography });
  mountRoutes(api, g.releases, { releases });
  mountRoutes(api, g.mail, { db, resets: passwordResetService(db, mailer, config), config });
  mountRoutes(api, g.tokens, { tokens });
  mountRoutes(api, g.masks, { sky });
  mountRoutes(api, g.calibration, { db, calibration, plausibility: plausibilityService(db, deps.readDb ?? db) });
  api.use((req, _res, next) => next(notFound(`The API route ${req.method} ${req.baseUrl}${req.path}`)));
  api.use(errorMiddleware);
  app.use('/api/v1', api);
  // the OpenAPI document rendered for people (server/openapi/docs + swagger-ui-dist assets)
  app.use('/api/docs', ...apiDocsPage());

  // The built client, with the router's paths falling back to index.html.
  const index = path.join(config.distDir, 'index.html');
  if (fs.existsSync(index)) {
    app.use(express.static(config.distDir, { index: false, maxAge: '1h' }));
    app.get(/^(?!\/api\/).*/, (_req, res) => {
      res.sendFile(index);
    });
  } else {
    app.get('/', (_req, res) => {
      res.type('text').send('Starveil API is running. Build the client with `npm run build` (npm start does this).');
    });
  }
  app.use(errorMiddleware);
  const close = async () => {
    await intake.close();
    if (!deps.sessionDb && sessionDb !== db) await sessionDb.destroy();
  };
  return Object.assign(app, { services: { intake, mail: mailer, tomography, review, measurements, releases, tokens, close } });
}
