/**
 * The app's one way to call the API: same-origin fetch with the session cookie, the CSRF
 * token on state-changing requests, and every response parsed with its shared zod schema.
 */
import type { z } from 'zod';
import { CSRF_HEADER } from '../shared/auth';

/** Base URL: same origin in the served web build; EXPO_PUBLIC_API_URL for `expo start`. */
export const API_BASE = process.env.EXPO_PUBLIC_API_URL ?? '';

let csrfToken: string | null = null;

/** Remembers the token from login or /api/auth/me. */
export function setCsrfToken(token: string | null): void {
  csrfToken = token;
}

/** An API answer that was not 2xx, with the server's message. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly body: unknown,
  ) {
    super(message);
  }
}

/** The current CSRF token (for XMLHttpRequest uploads that cannot use apiSend). */
export function getCsrfToken(): string | null {
  return csrfToken;
}

async function parseOrThrow<T>(res: Response, schema: z.ZodType<T>): Promise<T> {
  if (res.status === 204) return schema.parse(undefined);
  const text = await res.text();
  let body: unknown = null;
  try {
    body = text ? JSON.parse(text) : null;
  } catch {
    body = text;
  }
  if (!res.ok) {
    const serverMsg = body && typeof body === 'object' && 'error' in body ? String((body as { error: unknown }).error) : '';
    const msg = serverMsg || `Request failed (${res.status})`;
    throw new ApiError(res.status, msg, body);
  }
  return schema.parse(body);
}

/** GET and parse. Health answers 503 with a valid body, so `acceptStatuses` lets it through. */
export async function apiGet<T>(path: string, schema: z.ZodType<T>, opts: { acceptStatuses?: number[] } = {}): Promise<T> {
  const res = await fetch(API_BASE + path, { credentials: 'include', headers: { Accept: 'application/json' } });
  if (opts.acceptStatuses?.includes(res.status)) return schema.parse(await res.json());
  return parseOrThrow(res, schema);
}

/** POST/PUT/PATCH/DELETE a JSON body (or FormData) and parse the answer. */
export async function apiSend<T>(method: 'POST' | 'PUT' | 'PATCH' | 'DELETE', path: string, body: unknown, schema: z.ZodType<T>): Promise<T> {
  const headers: Record<string, string> = { Accept: 'application/json' };
  if (csrfToken) headers[CSRF_HEADER] = csrfToken;
  const isForm = typeof FormData !== 'undefined' && body instanceof FormData;
  if (!isForm && body !== undefined) headers['Content-Type'] = 'application/json';
  const res = await fetch(API_BASE + path, {
    method,
    credentials: 'include',
    headers,
    body: body === undefined ? undefined : isForm ? (body as FormData) : JSON.stringify(body),
  });
  return parseOrThrow(res, schema);
}
