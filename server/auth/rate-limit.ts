import type { Request } from 'express';
import { rateLimit } from 'express-rate-limit';
import { AppError } from '../errors.js';
import type { Config } from '../config.js';

/**
 * A limit on sign-in-like attempts (LOGIN_RATE_MAX per LOGIN_RATE_WINDOW_MS, per key). Its refusal
 * is an AppError (429 rate_limited) handed to the one error middleware; the RateLimit and
 * Retry-After headers are set before it.
 */
export function attemptLimiter(config: Pick<Config, 'loginRateLimit'>, opts: { message: string; key: (req: Request) => string; skipSuccessfulRequests: boolean }) {
  return rateLimit({
    windowMs: config.loginRateLimit.windowMs,
    limit: config.loginRateLimit.max,
    skipSuccessfulRequests: opts.skipSuccessfulRequests,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: opts.key,
    handler: (_req, _res, next, options) => next(new AppError(options.statusCode, 'rate_limited', opts.message)),
  });
}
