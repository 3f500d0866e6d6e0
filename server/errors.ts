import type { ErrorRequestHandler } from 'express';

/** A problem a client can cause or see; the error middleware turns it into `{error: {code, message, details?}}`. */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
  }
}

export const badRequest = (message: string, details?: unknown) => new AppError(400, 'bad_request', message, details);
export const unauthenticated = (message = 'Sign in first.') => new AppError(401, 'unauthenticated', message);
export const forbidden = (message = 'Your role may not do this.') => new AppError(403, 'forbidden', message);
export const notFound = (what: string) => new AppError(404, 'not_found', `${what} was not found.`);
export const conflict = (message: string, details?: unknown) => new AppError(409, 'conflict', message, details);

export const errorMiddleware: ErrorRequestHandler = (err, _req, res, _next) => {
  if (err instanceof AppError) {
    res.status(err.status).json({ error: { code: err.code, message: err.message, ...(err.details !== undefined ? { details: err.details } : {}) } });
    return;
  }
  // body-parser and multer errors carry a status or a code
  if (err && typeof err === 'object' && 'type' in err && err.type === 'entity.parse.failed') {
    res.status(400).json({ error: { code: 'bad_json', message: 'The request body is not valid JSON.' } });
    return;
  }
  if (err && typeof err === 'object' && 'status' in err && typeof err.status === 'number' && err.status < 500) {
    res.status(err.status).json({ error: { code: 'bad_request', message: String((err as Error).message) } });
    return;
  }
  if (isStoreError(err)) {
    console.error('store unavailable:', err instanceof Error ? err.message : err);
    res.status(503).set('Retry-After', '2').json({ error: { code: 'unavailable', message: 'The service could not reach its data store just now; please try again in a moment. The problem has been logged.' } });
    return;
  }
  console.error(err);
  res.status(500).json({ error: { code: 'internal', message: 'Something went wrong on the server; it has been logged.' } });
};

/** An error of the database, its pool or a store built on it (never shown to a person as such). */
export function isStoreError(err: unknown): boolean {
  if (!err || typeof err !== 'object') return false;
  const e = err as { code?: unknown; name?: unknown; message?: unknown };
  if (typeof e.code === 'string' && /^SQLITE_|^ECONNREFUSED$|^57P|^08/.test(e.code)) return true;
  if (e.name === 'KnexTimeoutError' || e.name === 'SqliteError') return true;
  return typeof e.message === 'string' && /Unable to acquire a connection|aborted due to pool|database connection is not open|no such table/i.test(e.message);
}
