/**
 * Errors that carry an HTTP status and a message safe to show. Anything else becomes a
 * plain 500 with no stack trace or SQL in the response.
 */
import type { ErrorRequestHandler, RequestHandler } from 'express';

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
  console.error(`[server] ${req.method} ${req.originalUrl} failed:`, err);
  res.status(500).json({ error: 'Something went wrong on the server. The error was logged; please try again.' });
};
