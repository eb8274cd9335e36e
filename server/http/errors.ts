/**
 * Errors that carry an HTTP status and a message safe to show. Anything else becomes a
 * plain 500 with no stack trace or SQL in the response.
 */
import type { ErrorRequestHandler, Request, RequestHandler } from 'express';

/** One problem with a request field. */
export interface FieldIssue {
  path: string;
  message: string;
}

/** An error with a status code and a message meant for the user. */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly details?: Record<string, unknown>,
  ) {
    super(message);
  }
}

/** 404 for any /api path no route claimed. */
export const apiNotFound: RequestHandler = (req, res) => {
  res.status(404).json({ error: `No API route ${req.method} ${req.originalUrl}` });
};

/**
 * How a log line names a request: its method and route pattern ("POST /api/replies/:token"),
 * never the path itself, which can hold a live reply token or a TIN; no query string.
 */
export function routeOf(req: Request): string {
  const pattern = req.route?.path;
  // Feature routers are mounted at /api; by the time the final handler runs, Express has
  // reset baseUrl to the app's own ''.
  if (typeof pattern === 'string')
    return `${req.method} ${req.baseUrl || (req.originalUrl.startsWith('/api/') && !pattern.startsWith('/api') ? '/api' : '')}${pattern}`;
  return `${req.method} (no route matched)`;
}

/**
 * An error for the log: its name, message and stack only. Other fields stay out: a
 * database error carries the query's parameters and the row's values (TINs, names), an
 * HTTP library's error the request body.
 */
export function describeError(err: unknown): string {
  if (err instanceof Error) {
    const code = (err as unknown as { code?: unknown }).code;
    return maskSecrets(`${err.stack ?? `${err.name}: ${err.message}`}${typeof code === 'string' ? ` [${code}]` : ''}`);
  }
  return `a thrown ${typeof err}`;
}

/**
 * Masks what looks like a TIN (9 digits) or a reply token (43 base64url characters) in a
 * message: a database's message may quote the value it refused.
 */
export function maskSecrets(text: string): string {
  return text.replace(/(?<![\w-])[A-Za-z0-9_-]{43}(?![\w-])/g, '[token]').replace(/(?<!\d)\d{9}(?!\d)/g, '[9 digits]');
}

/** Final error handler. */
export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  if (err instanceof HttpError) {
    res.status(err.status).json({ error: err.message, ...(err.details ?? {}) });
    return;
  }
  const status = typeof err?.status === 'number' ? err.status : typeof err?.statusCode === 'number' ? err.statusCode : 500;
  if (status === 413) {
    res.status(413).json({ error: 'Request body too large.' });
    return;
  }
  if (status === 400 && err?.type === 'entity.parse.failed') {
    res.status(400).json({ error: 'Request body is not valid JSON.' });
    return;
  }
  if (status >= 400 && status < 500) {
    res.status(status).json({ error: err?.expose ? String(err.message) : 'Bad request.' });
    return;
  }
  console.error(`[server] ${routeOf(req)} failed: ${describeError(err)}`);
  res.status(500).json({ error: 'Something went wrong on the server. The error was logged; please try again.' });
};
