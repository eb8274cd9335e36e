/**
 * react-query hooks for the examiner's start (issue 14): the "Needs me" counts and the
 * person's saved views of the queue, each parsed with its shared schema (shared/case-api.ts,
 * shared/saved-views.ts). The counts live under ['cases', …] so every case change that
 * refreshes the queue refreshes them too.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { apiGet, apiSend } from '../../../hooks/api-client';
import { NeedsMeSchema } from '../../../shared/case-api';
import { SavedViewListSchema, SavedViewSchema, type SavedViewCreate } from '../../../shared/saved-views';

/** How many of the caller's cases need them, by reason. */
export function useNeedsMe(enabled: boolean) {
  return useQuery({ queryKey: ['cases', 'needs-me'], queryFn: () => apiGet('/api/needs-me', NeedsMeSchema), enabled });
}

/** The caller's saved views. */
export function useSavedViews() {
  return useQuery({ queryKey: ['saved-views'], queryFn: () => apiGet('/api/saved-views', SavedViewListSchema) });
}

/** Keeps the queue's current filters under a name. */
export function useSaveView() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SavedViewCreate) => apiSend('POST', '/api/saved-views', body, SavedViewSchema),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['saved-views'] }),
  });
}

/** Deletes one of the caller's views. */
export function useDeleteView() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => apiSend('DELETE', `/api/saved-views/${id}`, undefined, z.undefined()),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['saved-views'] }),
  });
}
