import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { apiGet, apiSend } from '../../../hooks/api-client';
import { PreviewSchema, type PreviewRequest } from '../../../shared/programme/api';
import { PerformanceSchema, ProfileListSchema, ProfileVersionSchema, type NewProfileInput } from '../../../shared/scoring/profile-api';

/** Every profile version, newest first. */
export function useProfiles() {
  return useQuery({ queryKey: ['scoring', 'profiles'], queryFn: () => apiGet('/api/scoring/profiles', ProfileListSchema) });
}

/** How each factor did on closed cases, with the weights the outcome model suggests. */
export function usePerformance() {
  return useQuery({ queryKey: ['scoring', 'performance'], queryFn: () => apiGet('/api/scoring/performance', PerformanceSchema) });
}

/** What the form's settings would select in a scored batch (saves nothing). */
export function usePreview() {
  return useMutation({ mutationFn: (input: PreviewRequest) => apiSend('POST', '/api/scoring/preview', input, PreviewSchema) });
}

export function useAddProfile() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: NewProfileInput) => apiSend('POST', '/api/scoring/profiles', input, ProfileVersionSchema),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['scoring'] }),
  });
}

export function useActivateProfile() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (version: number) => apiSend('POST', `/api/scoring/profiles/${version}/activate`, undefined, z.undefined()),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['scoring'] }),
  });
}
