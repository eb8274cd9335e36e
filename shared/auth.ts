/**
 * Sign-in contract (docs/design.md#api-contract): login and `me` answer {user, csrfToken}; every
 * state-changing request after login sends the token in the `X-CSRF-Token` header.
 */
import { z } from 'zod';
import { noControlChars } from './text';
import { RoleSchema } from './roles';

export const LoginRequestSchema = z.object({
  username: z.string().trim().min(1, 'Enter your user name').max(64).check(noControlChars()),
  password: z.string().min(1, 'Enter your password').max(256),
});
export type LoginRequest = z.infer<typeof LoginRequestSchema>;

export const SessionUserSchema = z.object({
  id: z.string(),
  username: z.string(),
  displayName: z.string(),
  role: RoleSchema,
});
export type SessionUserDto = z.infer<typeof SessionUserSchema>;

export const SessionResponseSchema = z.object({
  user: SessionUserSchema,
  csrfToken: z.string(),
});
export type SessionResponse = z.infer<typeof SessionResponseSchema>;

/** The header that carries the CSRF token. */
export const CSRF_HEADER = 'X-CSRF-Token';

/** Minimum password length for staff accounts (common practice, no source). */
export const MIN_PASSWORD_LENGTH = 10;
export const PasswordSchema = z
  .string()
  .min(MIN_PASSWORD_LENGTH, `Use at least ${MIN_PASSWORD_LENGTH} characters`)
  .max(256, 'Use at most 256 characters')
  .check(noControlChars());
