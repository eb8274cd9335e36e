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

export const ResetPasswordSchema = z.object({ password: PasswordSchema });
export type ResetPasswordInput = z.infer<typeof ResetPasswordSchema>;
