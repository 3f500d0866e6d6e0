import { Router } from 'express';
import type { Knex } from 'knex';
import { rateLimit, ipKeyGenerator } from 'express-rate-limit';
import { guard, open } from '../auth/roles.js';
import { badRequest } from '../errors.js';
import { validateBody } from '../lib/validate.js';
import type { Config } from '../config.js';
import { listOutbox, type Mailer } from './transport.js';
import { passwordResetService } from './passwordReset.js';

/** A non-negative integer query parameter, or a 400 naming it. */
function intParam(raw: unknown, name: string, fallback: number, min: number, max: number): number {
  if (raw === undefined || raw === '') return fallback;
  const n = Number(raw);
  if (typeof raw !== 'string' || !Number.isInteger(n) || n < min || n > max) {
    throw badRequest(`The query parameter ${name} must be an integer from ${min} to ${max}; got "${String(raw)}".`, { fields: [{ field: name, message: `must be an integer from ${min} to ${max}` }] });
  }
  return n;
}

export function mailRoutes(deps: { db: Knex; mailer: Mailer; config: Config }): Router {
  const { db, mailer, config } = deps;
  const resets = passwordResetService(db, mailer, config);
  const r = Router();

  const limited = (message: string, skipSuccessfulRequests: boolean) =>
    rateLimit({
      windowMs: config.loginRateLimit.windowMs,
      limit: config.loginRateLimit.max,
      skipSuccessfulRequests,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      keyGenerator: (req) => `${ipKeyGenerator(req.ip ?? '')}|${String(req.body?.email ?? '').trim().toLowerCase()}`,
      handler: (_req, res, _next, options) => {
        res.status(options.statusCode).json({ error: { code: 'rate_limited', message } });
      },
    });
  // Every request counts (all answer 202), per address and e-mail, with the sign-in window and limit.
  const requestLimiter = limited('Too many password-reset requests; wait a few minutes and try again.', false);
  // Only failed confirmations count, per address.
  const confirmLimiter = limited('Too many invalid password-reset attempts; wait a few minutes and try again.', true);

  r.post('/auth/password-reset/request', open, requestLimiter, validateBody('api/password-reset-request'), async (req, res) => {
    await resets.request(req.body.email);
    res.status(202).json({
      message: `If an enabled account uses that e-mail address, a link to choose a new password is on its way. The link works once, for ${config.passwordResetMinutes} minutes.`,
    });
  });

  r.post('/auth/password-reset/confirm', open, confirmLimiter, validateBody('api/password-reset-confirm'), async (req, res) => {
    await resets.confirm(req.body.token, req.body.newPassword);
    res.status(204).end();
  });

  r.get('/admin/outbox', guard(['admin']), async (req, res) => {
    const limit = intParam(req.query.limit, 'limit', 50, 1, 500);
    const offset = intParam(req.query.offset, 'offset', 0, 0, Number.MAX_SAFE_INTEGER);
    res.json(await listOutbox(db, { limit, offset }));
  });

  return r;
}
