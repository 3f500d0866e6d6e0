import type { RequestHandler } from 'express';
import { badRequest } from '../errors.js';

/**
 * Every query parameter of the route must appear at most once and be plain text: `?q=a&q=b`
 * (which Express turns into an array) is a 400 naming the parameter instead of a crash or a
 * silent pick of one value.
 */
export const singleValuedQuery: RequestHandler = (req, _res, next) => {
  for (const [name, value] of Object.entries(req.query as Record<string, unknown>)) {
    if (typeof value !== 'string') {
      const n = Array.isArray(value) ? value.length : 0;
      next(badRequest(`The query parameter ${name} was given ${n > 1 ? `${n} times` : 'in a form this route does not take'}; give it once.`, { fields: [{ field: name, message: 'expected a single value' }] }));
      return;
    }
  }
  next();
};
