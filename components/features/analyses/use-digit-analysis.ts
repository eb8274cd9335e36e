/**
 * Uploads a file for an ad-hoc digit analysis (POST /api/analyses/digits) with upload progress.
 * The page never parses the amounts: the server reads the file in its reading thread
 * (server/batches/intake/upload-worker.ts), so a file of a million amounts leaves the page free.
 */
import { API_BASE, getCsrfToken } from '../../../hooks/api-client';
import { CSRF_HEADER } from '../../../shared/auth';
import { digitResultSchema, type DigitResultJson } from '../../../shared/digits/schema';

/** A file picked on the web (expo-document-picker gives the Blob). */
export interface PickedAmountsFile {
  name: string;
  size: number;
  file: Blob;
}

/**
 * Sends the file; `onProgress` gets the share sent (0..1), then null while the server reads it.
 * @returns the result JSON (the profile, with `split` when `by` is given)
 */
export function uploadForAnalysis(
  f: PickedAmountsFile,
  column: string | null,
  by: string | null,
  onProgress: (share: number | null) => void,
): Promise<DigitResultJson> {
  return new Promise((resolve, reject) => {
    const form = new FormData();
    form.append('file', f.file, f.name);
    if (column) form.append('column', column);
    if (by) form.append('by', by);
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `${API_BASE}/api/analyses/digits`);
    xhr.withCredentials = true;
    const token = getCsrfToken();
    if (token) xhr.setRequestHeader(CSRF_HEADER, token);
    xhr.upload.onprogress = (e) => onProgress(e.lengthComputable && e.loaded < e.total ? e.loaded / e.total : null);
    xhr.onerror = () => reject(new Error('The file could not be sent. Check the connection and try again.'));
    xhr.onload = () => {
      let body: unknown = null;
      try {
        body = JSON.parse(xhr.responseText);
      } catch {
        body = null;
      }
      if (xhr.status !== 200) {
        const msg = body && typeof body === 'object' && 'error' in body ? String((body as { error: unknown }).error) : `The analysis failed (${xhr.status}).`;
        return reject(new Error(msg));
      }
      try {
        resolve(digitResultSchema.parse(body));
      } catch {
        reject(new Error('The answer could not be read.'));
      }
    };
    onProgress(0);
    xhr.send(form);
  });
}
