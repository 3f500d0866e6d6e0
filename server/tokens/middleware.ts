import type { RequestHandler } from 'express';
import { rateLimit } from 'express-rate-limit';
import { AppError } from '../errors.js';
import type { Config } from '../config.js';
import type { TokenService } from './service.js';

const READ_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * `Authorization: Bearer <token>`: authenticates the request as the token's owner by setting
 * req.user, so the routes' own guard() decides what that person may read. Mounted right after
 * passport's session middleware; without the header it does nothing. A token only reads:
 * POST/PATCH/DELETE with a token are refused. Each token has its own rate limit.
 */
export function bearerTokenAuth(deps: { tokens: TokenService; config: Config }): RequestHandler {
  const { tokens, config } = deps;
  const { max, windowMs } = config.tokenRateLimit;
  const limiter = rateLimit({
    windowMs,
    limit: max,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: (_req, res) => `api-token:${res.locals.apiTokenId}`,
    // the refusal leaves through the one error middleware (RateLimit/Retry-After are already set)
    handler: (_req, _res, next, options) =>
      next(new AppError(options.statusCode, 'rate_limited', `This API token made more than ${max} requests in ${windowMs / 1000} s; wait the seconds in the Retry-After header and try again.`)),
  });

  return async (req, res, next) => {
    const header = req.get('authorization');
    if (header === undefined) return next();
    const m = /^Bearer[ ]+(\S+)[ ]*$/i.exec(header);
    if (!m) {
      throw new AppError(401, 'bad_authorization', 'The Authorization header must be "Bearer <token>" with a personal API token (create one on the Tokens page).');
    }
    const found = await tokens.authenticate(m[1]);
    if (!found) throw new AppError(401, 'invalid_token', 'This API token is unknown or has been revoked; create a new one on the Tokens page.');
    res.locals.apiTokenId = found.tokenId;
    limiter(req, res, (err?: unknown) => {
      if (err) return next(err);
      if (!READ_METHODS.has(req.method)) {
        return next(new AppError(403, 'token_read_only', `API tokens only read (GET). ${req.method} needs you signed in with your password in the browser; the token was not used.`));
      }
      req.user = found.user;
      next();
    });
  };
}
