/**
 * react-query hooks for the supervisor's Programme screen (issue 17).
 */
import { useQuery } from '@tanstack/react-query';
import { apiGet } from '../../../hooks/api-client';
import { OutcomesSchema } from '../../../shared/programme/api';

/** Outcome figures of finished cases (all batches, all time unless filtered). */
export function useOutcomes(filter: { from?: string; to?: string; batch?: string } = {}) {
  const qs = new URLSearchParams(Object.entries(filter).filter(([, v]) => v) as [string, string][]).toString();
  return useQuery({ queryKey: ['programme', 'outcomes', qs], queryFn: () => apiGet(`/api/programme/outcomes${qs ? `?${qs}` : ''}`, OutcomesSchema) });
}
