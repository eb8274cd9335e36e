/**
 * validate(schema): checks a request part against a shared zod schema and answers 422 with
 * every issue (not only the first), each with its field path.
 */
import type { RequestHandler } from 'express';
import type { z } from 'zod';

type Part = 'body' | 'query' | 'params';

/** Validates `req[part]`; on success the parsed value replaces it (for query: res.locals.query). */
export function validate(schema: z.ZodType, part: Part = 'body'): RequestHandler {
  return (req, res, next) => {
    const result = schema.safeParse(req[part]);
    if (!result.success) {
      res.status(422).json({
        error: `The request ${part === 'body' ? 'body' : part} is not valid.`,
        issues: result.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message })),
      });
      return;
    }
    // Express 5 makes req.query a getter; keep the parsed value on res.locals instead.
    if (part === 'query') res.locals.query = result.data;
    else (req as unknown as Record<Part, unknown>)[part] = result.data;
    next();
  };
}
