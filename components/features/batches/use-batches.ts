import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { apiGet, apiSend } from '../../../hooks/api-client';
import { BatchDetailSchema, BatchListSchema, type BatchState } from '../../../shared/returns/batch-rows';
import { uploadBatch, type UploadParts } from './upload-batch';

const KEY = ['batches'] as const;

/** States in which a batch is still moving (the screens poll them). */
export const BATCH_IN_FLIGHT: readonly BatchState[] = ['received', 'validating', 'queued', 'scoring'];

/** A page of batches, newest first; refreshed while any of them is still moving. */
export function useBatches(page = 1, pageSize = 25) {
  return useQuery({
    queryKey: [...KEY, 'list', page, pageSize],
    queryFn: () => apiGet(`/api/batches?page=${page}&pageSize=${pageSize}`, BatchListSchema),
    refetchInterval: (q) => (q.state.data?.items.some((b) => BATCH_IN_FLIGHT.includes(b.state)) ? 4000 : false),
  });
}

/** One batch with its report; polled every 2 s until it is scored or rejected. */
export function useBatch(id: string) {
  return useQuery({
    queryKey: [...KEY, 'one', id],
    queryFn: () => apiGet(`/api/batches/${encodeURIComponent(id)}`, BatchDetailSchema),
    refetchInterval: (q) => (q.state.data && BATCH_IN_FLIGHT.includes(q.state.data.state) ? 2000 : false),
  });
}

/** Uploads a batch; `progress` runs from 0 to 1 while the bytes go out. */
export function useUploadBatch() {
  const qc = useQueryClient();
  const [progress, setProgress] = useState(0);
  const mutation = useMutation({
    mutationFn: ({ parts, label }: { parts: UploadParts; label?: string }) => {
      setProgress(0);
      return uploadBatch(parts, setProgress, label);
    },
    onSettled: () => qc.invalidateQueries({ queryKey: KEY }),
  });
  return { ...mutation, progress };
}

/** Ends a batch whose check has stalled (the server checks that it has), so its file can be uploaded again. */
export function useRetryBatch(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => apiSend('POST', `/api/batches/${encodeURIComponent(id)}/retry`, undefined, BatchDetailSchema),
    onSuccess: (b) => qc.setQueryData([...KEY, 'one', id], b),
    onSettled: () => qc.invalidateQueries({ queryKey: KEY }),
  });
}

/** Where the batch's report downloads from. */
export function reportUrl(id: string): string {
  return `/api/batches/${encodeURIComponent(id)}/report.xlsx`;
}
