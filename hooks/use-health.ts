import { useQuery } from '@tanstack/react-query';
import { HealthResponseSchema } from '../shared/health';
import { apiGet } from './api-client';

/** The system status from `GET /api/health`, refreshed every 15 s. */
export function useHealth() {
  return useQuery({
    queryKey: ['health'],
    queryFn: () => apiGet('/api/health', HealthResponseSchema, { acceptStatuses: [503] }),
    refetchInterval: 15_000,
  });
}
