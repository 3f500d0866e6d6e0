import type { Request, RequestHandler } from 'express';
import type { Config } from '../config.js';

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);
/** Routes that authenticate by what is in their body (a password or a one-time token), never by the cookie. */
const BODY_AUTHENTICATED = new Set(['/auth/login', '/auth/password-reset/request', '/auth/password-reset/confirm']);
export const SESSION_COOKIE = 'starveil.sid';

/** `scheme://host[:port]` of a URL, or null when it is not an absolute http(s) URL. */
export function originOf(url: string | undefined): string | null {
  if (!url) return null;
  try {
    const u = new URL(url);
    if (u.protocol !== 'http:' && u.protocol !== 'https:') return null;
    return u.origin;
  } catch {
    return null;
  }
}

/** The origins a browser may write from: the public URL, extra configured ones, and the request's own host. */
export function allowedOrigins(req: Request, config: Pick<Config, 'publicUrl' | 'allowedOrigins'>): Set<string> {
  const out = new Set<string>();
  for (const o of [config.publicUrl, ...config.allowedOrigins]) {
    const origin = originOf(o);
    if (origin) out.add(origin);
  }
  // req.protocol follows X-Forwarded-Proto only when TRUST_PROXY says the proxy is trusted
  const own = originOf(`${req.protocol}://${req.get('host') ?? ''}`);
  if (own) out.add(own);
  return out;
}

function hasSessionCookie(req: Request): boolean {
  const cookie = req.headers.cookie;
  return typeof cookie === 'string' && cookie.split(';').some((c) => c.trim().startsWith(`${SESSION_COOKIE}=`));
}

/**
 * Cross-site request forgery guard for cookie-authenticated writes (the OWASP "verify the origin with
 * standard headers" defence; SameSite=Lax alone lets a top-level form post or a plain-text fetch through
 * on some browsers and subdomains).
 * - GET/HEAD/OPTIONS pass (they never change anything).
 * - A request with an Authorization header passes here: bearer tokens never come from a browser's
 *   cookie jar, and the token middleware refuses every token write.
 * - Otherwise the Origin header (or, when a browser left it out, the origin of the Referer) must be one of
 *   allowedOrigins(), else 403 `cross_origin`, whatever the content type.
 * - With neither header, a request carrying the session cookie is refused (403 `origin_missing`): every
 *   browser sends Origin on POST/PUT/PATCH/DELETE, so only a script can send neither, and a script can
 *   add `-H "Origin: $PUBLIC_URL"`. Without the cookie (signing in from a script) nothing can be forged.
 */
export function sameOriginWrites(config: Pick<Config, 'publicUrl' | 'allowedOrigins'>): RequestHandler {
  return (req, res, next) => {
    if (SAFE_METHODS.has(req.method)) return next();
    if (req.headers.authorization !== undefined) return next();
    const originHeader = req.get('origin');
    const refererHeader = req.get('referer');
    const claimed = originHeader !== undefined ? originHeader : refererHeader !== undefined ? refererHeader : undefined;
    if (claimed === undefined) {
      if (hasSessionCookie(req) && !BODY_AUTHENTICATED.has(req.path)) {
        res.status(403).json({
          error: {
            code: 'origin_missing',
            message: `A ${req.method} signed in with the session cookie needs an Origin (or Referer) header naming this site (${originOf(config.publicUrl) ?? config.publicUrl}); browsers send it themselves, scripts add -H "Origin: ${originOf(config.publicUrl) ?? config.publicUrl}".`,
            details: { fields: [{ field: 'Origin', message: 'header required for cookie-authenticated writes' }] },
          },
        });
        return;
      }
      return next();
    }
    const origin = originOf(claimed);
    if (origin && allowedOrigins(req, config).has(origin)) return next();
    res.status(403).json({
      error: {
        code: 'cross_origin',
        message: `This ${req.method} came from ${origin ?? JSON.stringify(claimed)}, not from this site (${originOf(config.publicUrl) ?? config.publicUrl}); writes are accepted only from Starveil's own pages.`,
        details: { fields: [{ field: originHeader !== undefined ? 'Origin' : 'Referer', message: 'must be this site' }] },
      },
    });
  };
}
