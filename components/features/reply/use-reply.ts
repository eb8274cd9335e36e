/**
 * Hooks of the taxpayer's reply page: what the link asks for (or why it can no longer be
 * used), and the upload with progress. No session: the token in the address is the key.
 */
import { useMutation, useQuery } from '@tanstack/react-query';
import { API_BASE, ApiError, getCsrfToken } from '../../../hooks/api-client';
import { CSRF_HEADER } from '../../../shared/auth';
import { ReplyClosedSchema, ReplyReceiptSchema, ReplyRequestSchema, type ReplyClosed, type ReplyReceipt, type ReplyRequestDto } from '../../../shared/letters';

/** What the page can show for a link: the request, or that it was used or expired. */
export type ReplyLink = ReplyRequestDto | ReplyClosed;

async function fetchReplyLink(token: string): Promise<ReplyLink> {
  const res = await fetch(`${API_BASE}/api/replies/${encodeURIComponent(token)}`, { headers: { Accept: 'application/json' } });
  const body: unknown = await res.json().catch(() => null);
  if (res.status === 200) return ReplyRequestSchema.parse(body);
  // A used or expired link is an answer to show, not an error.
  if (res.status === 410) return ReplyClosedSchema.parse(body);
  const msg = body && typeof body === 'object' && 'error' in body ? String((body as { error: unknown }).error) : `Request failed (${res.status})`;
  throw new ApiError(res.status, msg, body);
}

/** The request behind a reply link. Unknown links (404) are not retried. */
export function useReplyLink(token: string) {
  return useQuery({
    queryKey: ['reply', token],
    queryFn: () => fetchReplyLink(token),
    retry: (count, e) => !(e instanceof ApiError && e.status < 500) && count < 2,
    staleTime: Infinity,
  });
}

/**
 * Sends one part of the reply: the files as multipart `files` and `complete` ("true" when the
 * taxpayer says that is everything), with XMLHttpRequest, because fetch cannot report upload
 * progress; `onProgress` gets the share sent, 0–1.
 */
export function uploadReply(token: string, files: readonly File[], complete: boolean, onProgress: (share: number) => void): Promise<ReplyReceipt> {
  return new Promise((resolve, reject) => {
    const form = new FormData();
    // First, so the server knows before the files arrive (it reads the fields in order).
    form.append('complete', complete ? 'true' : 'false');
    for (const f of files) form.append('files', f, f.name);
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `${API_BASE}/api/replies/${encodeURIComponent(token)}`);
    xhr.setRequestHeader('Accept', 'application/json');
    // Only matters if office staff open a taxpayer's link while signed in (CSRF rule).
    const csrf = getCsrfToken();
    if (csrf) xhr.setRequestHeader(CSRF_HEADER, csrf);
    xhr.upload.onprogress = (e) => {
      if (e.lengthComputable) onProgress(e.loaded / e.total);
    };
    xhr.onload = () => {
      let body: unknown = null;
      try {
        body = JSON.parse(xhr.responseText);
      } catch {
        body = null;
      }
      if (xhr.status === 201) {
        onProgress(1);
        resolve(ReplyReceiptSchema.parse(body));
        return;
      }
      const msg =
        body && typeof body === 'object' && 'error' in body
          ? String((body as { error: unknown }).error)
          : `The upload failed (${xhr.status}). Please try again.`;
      reject(new ApiError(xhr.status, msg, body));
    };
    xhr.onerror = () => reject(new ApiError(0, 'The connection was lost while sending. Please check your connection and try again.', null));
    xhr.send(form);
  });
}

/** One send as a mutation, with progress kept by the caller. */
export function useUploadReply(token: string, onProgress: (share: number) => void) {
  return useMutation({ mutationFn: (v: { files: readonly File[]; complete: boolean }) => uploadReply(token, v.files, v.complete, onProgress) });
}
