/** User administration contract (admin only). */
import { z } from 'zod';
import { noControlChars } from './text';
import { PasswordSchema } from './auth';
import { RoleSchema } from './roles';

export const UserSchema = z.object({
  id: z.string(),
  username: z.string(),
  displayName: z.string(),
  role: RoleSchema,
  active: z.boolean(),
  createdAt: z.string(),
  /**
   * Seconds until the account may sign in again after too many failed sign-ins; null when it
   * is not locked (issue 14). An administrator may unlock it at once.
   */
  lockedForSeconds: z.number().int().nullable(),
});
export type UserDto = z.infer<typeof UserSchema>;

export const UserListSchema = z.object({ items: z.array(UserSchema) });

export const CreateUserSchema = z.object({
  username: z
    .string()
    .trim()
    .regex(/^[a-z][a-z0-9._-]{1,31}$/, 'Use 2–32 lower-case letters, digits, dots, dashes or underscores, starting with a letter'),
  displayName: z.string().trim().min(1, "Enter the person's name").max(120).check(noControlChars()),
  role: RoleSchema,
  password: PasswordSchema,
});
export type CreateUserInput = z.infer<typeof CreateUserSchema>;

export const UpdateUserSchema = z
  .object({
    displayName: z.string().trim().min(1).max(120).check(noControlChars()).optional(),
    role: RoleSchema.optional(),
    active: z.boolean().optional(),
  })
  .refine((v) => Object.keys(v).length > 0, { message: 'Change at least one of displayName, role, active' });
export type UpdateUserInput = z.infer<typeof UpdateUserSchema>;

/**
 * What a role change means, in words, for the confirmation the administrator reads before
 * saving it (issue 14). One sentence per role: what the person will be able to see and do.
 */
export const ROLE_CONSEQUENCES: Record<z.infer<typeof RoleSchema>, string> = {
  clerk: 'will load batches of returns and read their reports, and will no longer see cases',
  examiner: 'will see the examination queue and the taxpayer data of cases, and work the cases they take',
  supervisor: 'will see every case and its taxpayer data, assign cases, export the queue and change scoring',
  admin: 'will manage every account (roles, passwords, deactivation) and read the access log, and will see no taxpayer data',
};

export const ResetPasswordSchema = z.object({ password: PasswordSchema });
export type ResetPasswordInput = z.infer<typeof ResetPasswordSchema>;
