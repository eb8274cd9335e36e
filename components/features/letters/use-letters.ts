/**
 * react-query hooks for a case's letters: the list, sending a document request and writing
 * a referral memo. Both writes change the case's state, so they refresh the case query
 * (['case', caseId], which also covers the letters list kept under it) and the queue and
 * workload views that count cases by state.
 */
import { useMutation, useQuery, useQueryClient, type QueryClient, type UseMutationResult } from '@tanstack/react-query';
import { useState } from 'react';
import type { FieldValues, UseFormReturn } from 'react-hook-form';
import { API_BASE, apiGet, apiSend } from '../../../hooks/api-client';
import type { TransitionRequest } from '../../../shared/cases';
import {
  LetterContextSchema,
  LetterCreatedSchema,
  LetterListSchema,
  LetterPreviewSchema,
  type DocumentRequestInput,
  type LetterPreview,
  type ReferralInput,
} from '../../../shared/letters';

/** Query key of a case's letters: under the case's own key so one invalidation refreshes both. */
export const lettersKey = (caseId: string) => ['case', caseId, 'letters'] as const;

/** Everything a letter's case move changes on screen. */
function refreshAfterMove(qc: QueryClient, caseId: string) {
  return Promise.all([
    qc.invalidateQueries({ queryKey: ['case', caseId] }),
    qc.invalidateQueries({ queryKey: ['cases'] }),
    qc.invalidateQueries({ queryKey: ['workload'] }),
  ]);
}

/** The letters kept with a case, newest first. */
export function useLetters(caseId: string, enabled = true) {
  return useQuery({ queryKey: lettersKey(caseId), queryFn: () => apiGet(`/api/cases/${caseId}/letters`, LetterListSchema), enabled: enabled && !!caseId });
}

/** Sends a document request (e-mail with the PDF); the case moves to awaiting reply. */
export function useSendDocumentRequest(caseId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: DocumentRequestInput) =>
      apiSend('POST', `/api/cases/${caseId}/document-requests`, { ...input, email: input.email ? input.email : undefined }, LetterCreatedSchema),
    onSuccess: () => refreshAfterMove(qc, caseId),
  });
}

/** Writes a referral memo; the case moves to referred. */
export function useSendReferral(caseId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: ReferralInput) => apiSend('POST', `/api/cases/${caseId}/referral`, input, LetterCreatedSchema),
    onSuccess: () => refreshAfterMove(qc, caseId),
  });
}

/** Address of a letter's PDF (opened in the browser with the session cookie). */
export function letterPdfUrl(caseId: string, letterId: string): string {
  return `${API_BASE}/api/cases/${caseId}/letters/${letterId}/pdf`;
}

/** Address of a file a taxpayer sent back. */
export function replyUploadUrl(caseId: string, uploadId: string): string {
  return `${API_BASE}/api/cases/${caseId}/reply-uploads/${uploadId}`;
}

/** What the request form needs before Send: the office's today and the address on file (issue 14). */
export function useLetterContext(caseId: string, enabled = true) {
  return useQuery({
    queryKey: ['case', caseId, 'letter-context'],
    queryFn: () => apiGet(`/api/cases/${caseId}/letter-context`, LetterContextSchema),
    enabled,
  });
}

/** The document request as it would be sent; nothing is stored or sent. */
export function usePreviewDocumentRequest(caseId: string) {
  return useMutation({
    mutationFn: (input: DocumentRequestInput) =>
      apiSend('POST', `/api/cases/${caseId}/document-requests/preview`, { ...input, email: input.email ? input.email : undefined }, LetterPreviewSchema),
  });
}

/** The referral memo a referral would write, as text; nothing is stored and the case does not move. */
export function usePreviewReferral(caseId: string) {
  return useMutation({
    mutationFn: (input: ReferralInput) => apiSend('POST', `/api/cases/${caseId}/referral/preview`, input, LetterPreviewSchema),
  });
}

/** The closing letter (no change or adjustment proposal) a closing would send; nothing is stored or sent. */
export function usePreviewClosingLetter(caseId: string) {
  return useMutation({
    mutationFn: (input: TransitionRequest) => apiSend('POST', `/api/cases/${caseId}/closing-letter/preview`, input, LetterPreviewSchema),
  });
}

/**
 * Read first, then act (issue 14): the form's button first asks for the preview of its values;
 * once that preview is shown for exactly these values, the button submits. Any change to the
 * form asks for a new preview, so what is sent is what was read.
 */
export function usePreviewFirst<T extends FieldValues>(
  form: UseFormReturn<T>,
  preview: UseMutationResult<LetterPreview, Error, T>,
  onSubmit: (values: T) => void,
) {
  const [previewed, setPreviewed] = useState<string | null>(null);
  const key = JSON.stringify(form.watch());
  const ready = previewed === key && !!preview.data;
  const submit = form.handleSubmit((v) => {
    if (ready) return onSubmit(v);
    preview.mutate(v, { onSuccess: () => setPreviewed(key) });
  });
  return { ready, submit, change: () => setPreviewed(null) };
}
