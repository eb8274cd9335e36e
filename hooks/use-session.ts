import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { SessionResponseSchema, type LoginRequest, type SessionResponse } from '../shared/auth';
import { ApiError, apiGet, apiSend, setCsrfToken } from './api-client';
import { z } from 'zod';

const SESSION_KEY = ['session'] as const;

/** The signed-in user, or null when signed out. Keeps the CSRF token for later requests. */
export function useSession() {
  return useQuery({
    queryKey: SESSION_KEY,
    queryFn: async (): Promise<SessionResponse | null> => {
      try {
        const s = await apiGet('/api/auth/me', SessionResponseSchema);
        setCsrfToken(s.csrfToken);
        return s;
      } catch (e) {
        if (e instanceof ApiError && e.status === 401) {
          setCsrfToken(null);
          return null;
        }
        throw e;
      }
    },
    staleTime: 60_000,
  });
}

/** Signs in; on success the session query holds the new user. */
export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: LoginRequest) => apiSend('POST', '/api/auth/login', body, SessionResponseSchema),
    onSuccess: (s) => {
      setCsrfToken(s.csrfToken);
      qc.clear();
      qc.setQueryData(SESSION_KEY, s);
    },
  });
}

/** Signs out and forgets every cached answer (they may hold taxpayer data). */
export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => apiSend('POST', '/api/auth/logout', undefined, z.unknown()),
    onSettled: () => {
      setCsrfToken(null);
      qc.clear();
      qc.setQueryData(SESSION_KEY, null);
    },
  });
}
