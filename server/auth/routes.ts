import { Router } from 'express';
import type passport from 'passport';
import { rateLimit, ipKeyGenerator } from 'express-rate-limit';
import { AppError } from '../errors.js';
import { validateBody } from '../lib/validate.js';
import { guard, open, type SessionUser } from './roles.js';
import { normaliseEmail, type AuthService } from './service.js';
import type { Config } from '../config.js';

export function authRoutes(deps: { auth: AuthService; passport: passport.PassportStatic; config: Config }): Router {
  const { auth, passport: pp, config } = deps;
  const r = Router();

  // Counts failed sign-ins per address and e-mail; successful ones are not counted.
  const loginLimiter = rateLimit({
    windowMs: config.loginRateLimit.windowMs,
    limit: config.loginRateLimit.max,
    skipSuccessfulRequests: true,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    // the address as the service looks it up (trimmed, lowercased), so padding cannot dodge a lockout;
    // req.ip is the socket's address unless TRUST_PROXY names the proxy in front
    keyGenerator: (req) => `${ipKeyGenerator(req.ip ?? '')}|${typeof req.body?.email === 'string' ? normaliseEmail(req.body.email) : ''}`,
    handler: (_req, res, _next, options) => {
      res.status(options.statusCode).json({ error: { code: 'rate_limited', message: 'Too many failed sign-ins; wait a few minutes and try again.' } });
    },
  });

  r.post('/auth/login', open, loginLimiter, validateBody('api/login'), (req, res, next) => {
    pp.authenticate('local', (err: unknown, user: SessionUser | false) => {
      if (err) return next(err);
      if (!user) return next(new AppError(401, 'bad_credentials', 'The e-mail or password is not right, or the account is disabled.'));
      // New session id at sign-in (no fixation).
      req.session.regenerate((regenErr) => {
        if (regenErr) return next(regenErr);
        req.logIn(user, (loginErr) => {
          if (loginErr) return next(loginErr);
          res.json({ user });
        });
      });
    })(req, res, next);
  });

  r.post('/auth/logout', open, (req, res, next) => {
    req.logout((err) => {
      if (err) return next(err);
      req.session.destroy(() => {
        res.clearCookie('starveil.sid');
        res.status(204).end();
      });
    });
  });

  r.get('/me', guard('signed-in'), (req, res) => {
    res.json(req.user);
  });

  // Wrong current passwords count per account like failed sign-ins, so a borrowed session cannot
  // guess the password here without the sign-in limit.
  const passwordChangeLimiter = rateLimit({
    windowMs: config.loginRateLimit.windowMs,
    limit: config.loginRateLimit.max,
    skipSuccessfulRequests: true,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: (req) => `password-change|${(req.user as SessionUser | undefined)?.id ?? ''}`,
    handler: (_req, res, _next, options) => {
      res.status(options.statusCode).json({ error: { code: 'rate_limited', message: 'Too many wrong current passwords; wait a few minutes and try again.' } });
    },
  });

  r.post('/me/password', guard('signed-in'), passwordChangeLimiter, validateBody('api/password-change'), async (req, res) => {
    await auth.changePassword(req.user!.id, req.body.currentPassword, req.body.newPassword, req.sessionID);
    res.status(204).end();
  });

  return r;
}
