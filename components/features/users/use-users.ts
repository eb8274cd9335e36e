import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { apiGet, apiSend } from '../../../hooks/api-client';
import { UserListSchema, UserSchema, type CreateUserInput, type UpdateUserInput } from '../../../shared/users';

const KEY = ['users'] as const;

/** All staff accounts (admin). */
export function useUsers() {
  // Locks run out by themselves (15 minutes): the list looks again now and then.
  return useQuery({ queryKey: KEY, queryFn: () => apiGet('/api/users', UserListSchema), refetchInterval: 30_000 });
}

/** Lets an account locked by failed sign-ins sign in again at once. */
export function useUnlockUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => apiSend('POST', `/api/users/${encodeURIComponent(id)}/unlock`, undefined, UserSchema),
    onSettled: () => qc.invalidateQueries({ queryKey: KEY }),
  });
}

export function useCreateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateUserInput) => apiSend('POST', '/api/users', input, UserSchema),
    onSuccess: () => qc.invalidateQueries({ queryKey: KEY }),
  });
}

export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, ...input }: UpdateUserInput & { id: string }) => apiSend('PATCH', `/api/users/${id}`, input, UserSchema),
    onSuccess: () => qc.invalidateQueries({ queryKey: KEY }),
  });
}

export function useResetPassword() {
  return useMutation({
    mutationFn: ({ id, password }: { id: string; password: string }) => apiSend('POST', `/api/users/${id}/password`, { password }, z.undefined()),
  });
}
