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
import { authRoutes } from './auth/routes.js';
import { adminRoutes } from './admin/routes.js';
import { catalogRoutes } from './catalog/routes.js';
import { instrumentRoutes } from './instruments/routes.js';
import { instrumentService } from './instruments/service.js';
import { intakeService, type IntakeService } from './intake/service.js';
import { intakeRoutes } from './intake/routes.js';
import { measurementService, type MeasurementService } from './measurements/service.js';
import { reviewService, type ReviewService } from './review/service.js';
import { reviewRoutes } from './review/routes.js';
import { tomographyService, type TomographyService } from './tomography/service.js';
import { tomographyRoutes } from './tomography/routes.js';
import { releaseService, type ReleaseService } from './releases/service.js';
import { releaseRoutes } from './releases/routes.js';
import { notifyCuratorsOfNewBatch, notifyObserverOfReview } from './mail/notifications.js';
import { createMailer, type Mailer } from './mail/transport.js';
import { mailRoutes } from './mail/routes.js';
import { tokenService, type TokenService } from './tokens/service.js';
import { tokenRoutes } from './tokens/routes.js';
import { bearerTokenAuth } from './tokens/middleware.js';
import { sameOriginWrites } from './auth/origin.js';
import { skyService } from './masks/service.js';
import { maskRoutes } from './masks/routes.js';
import { apiDocsPage, openApiRoutes } from './openapi/routes.js';
import { calibrationRoutes, calibrationService, plausibilityService } from './calibration/index.js';
import { decisionRoutes } from './review/decision.js';

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

  const auth = authService(db, { allowDemoPassword: config.allowDemoPassword });
  const pp = createPassport(auth);
  const mailer = createMailer(db, config);
  // e-mail is sent after the change has committed and never holds up the request
  const intake = intakeService(db, config, config.intake, deps.readDb ?? db, (batch) => notifyCuratorsOfNewBatch(mailer, db, batch));
  const measurements = measurementService(db, { crossmatchArcsec: config.intake.crossmatchArcsec });
  const review = reviewService(db, deps.readDb ?? db, (batch, decision, note, counts) => {
    void (async () => {
      const uploader = await db('users').where({ id: batch.uploaded_by }).first('name', 'email');
      const b = await db('batches').where({ id: batch.id }).first('counts_json');
      await notifyObserverOfReview(mailer, db, { id: batch.id, filename: batch.filename, uploadedBy: uploader }, decision, note, { ...(b?.counts_json ? JSON.parse(b.counts_json) : {}), ...counts });
    })().catch((e) => console.error('review notification', e));
  });
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

  api.get('/health', (_req, res) => {
    res.json({ ok: true });
  });
  api.use(openApiRoutes());
  api.use(authRoutes({ auth, passport: pp, config }));
  api.use(adminRoutes({ auth }));
  api.use(instrumentRoutes({ instruments: instrumentService(db, deps.readDb ?? db) }));
  api.use(catalogRoutes({ db }));
  api.use(intakeRoutes({ intake, config }));
  api.use(reviewRoutes({ db, review, measurements }));
  api.use(tomographyRoutes({ tomography }));
  api.use(releaseRoutes({ releases }));
  api.use(mailRoutes({ db, mailer, config }));
  api.use(tokenRoutes({ tokens }));
  api.use(maskRoutes({ sky }));
  const calibration = calibrationService(db, deps.readDb ?? db);
  // a calibration a stopped server left part-way applied (or reverted) is put right from its stored values
  calibration.recover().catch((e) => console.error('calibration recovery', e));
  api.use(calibrationRoutes({ db, calibration, plausibility: plausibilityService(db, deps.readDb ?? db) }));
  api.use(decisionRoutes({ db }));
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
