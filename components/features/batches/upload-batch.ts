/**
 * Sends a batch to `POST /api/batches` with XMLHttpRequest, because fetch cannot report
 * upload progress. Same session cookie and CSRF header as every other API call.
 */
import { API_BASE, getCsrfToken } from '../../../hooks/api-client';
import { CSRF_HEADER } from '../../../shared/auth';
import {
  BatchCreatedSchema,
  BatchDuplicateSchema,
  BatchRejectedSchema,
  type BatchCreated,
  type BatchRejected,
  type BatchTable,
} from '../../../shared/returns/batch-rows';

/** A file chosen by the clerk: a browser File on the web, a local uri on a phone. */
export type PickedFile = { name: string; size: number; file: Blob } | { name: string; size: number; uri: string; mimeType?: string };

/** The parts of one upload: one workbook, or CSV files by table. */
export type UploadParts = { file: PickedFile } | Partial<Record<BatchTable, PickedFile>>;

/** How the upload ended. */
export type UploadOutcome =
  | { kind: 'accepted'; batch: BatchCreated }
  | { kind: 'rejected'; report: BatchRejected; status: number }
  | { kind: 'duplicate'; batchId: string; message: string }
  | { kind: 'failed'; message: string };

/**
 * Which table a CSV file is, from its name: "returns", "line_items"/"line items"/"lines",
 * "statements". Null when the name does not say.
 */
export function tableFromName(name: string): BatchTable | null {
  const n = name.toLowerCase();
  if (/line[\s_-]*items?|lines/.test(n)) return 'line_items';
  if (/statement/.test(n)) return 'statements';
  if (/return/.test(n)) return 'returns';
  return null;
}

/**
 * Sorts chosen files into upload parts.
 * @returns the parts, or a sentence saying what to choose instead
 */
export function partsFromFiles(files: PickedFile[]): { parts: UploadParts } | { problem: string } {
  if (files.length === 0) return { problem: 'Choose a batch: one .xlsx workbook, or the CSV files returns and line_items (and statements).' };
  const workbooks = files.filter((f) => /\.xlsx$/i.test(f.name));
  if (workbooks.length === 1 && files.length === 1) return { parts: { file: workbooks[0] } };
  if (workbooks.length) return { problem: 'Choose either one .xlsx workbook or CSV files, not both.' };
  const parts: Partial<Record<BatchTable, PickedFile>> = {};
  for (const f of files) {
    const t = tableFromName(f.name);
    if (!t) return { problem: `Cannot tell which table "${f.name}" is. Name the CSV files returns.csv, line_items.csv and statements.csv.` };
    if (parts[t]) return { problem: `Two files look like ${t}: "${parts[t]!.name}" and "${f.name}". Choose one of them.` };
    parts[t] = f;
  }
  if (!parts.returns || !parts.line_items)
    return { problem: `A CSV batch needs both returns and line_items; ${parts.returns ? 'line_items' : 'returns'} is missing.` };
  return { parts };
}

function append(form: FormData, field: string, f: PickedFile) {
  if ('file' in f) form.append(field, f.file, f.name);
  // React Native's FormData takes a {uri, name, type} object for a local file.
  else form.append(field, { uri: f.uri, name: f.name, type: f.mimeType ?? 'application/octet-stream' } as unknown as Blob);
}

/**
 * Uploads, reporting progress from 0 to 1 as the bytes go out.
 * @param onProgress called with the share sent so far
 */
export function uploadBatch(parts: UploadParts, onProgress: (share: number) => void, label = ''): Promise<UploadOutcome> {
  const form = new FormData();
  // The label first: the server reads it before the files.
  if (label.trim()) form.append('label', label.trim());
  for (const [field, f] of Object.entries(parts)) if (f) append(form, field, f as PickedFile);
  return new Promise((resolve) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `${API_BASE}/api/batches`);
    xhr.withCredentials = true;
    xhr.setRequestHeader('Accept', 'application/json');
    const token = getCsrfToken();
    if (token) xhr.setRequestHeader(CSRF_HEADER, token);
    xhr.upload.onprogress = (e) => {
      if (e.lengthComputable && e.total > 0) onProgress(e.loaded / e.total);
    };
    xhr.onerror = () => resolve({ kind: 'failed', message: 'The upload did not reach the server. Check the connection and try again.' });
    xhr.onload = () => {
      let body: unknown = null;
      try {
        body = JSON.parse(xhr.responseText);
      } catch {
        body = null;
      }
      const created = BatchCreatedSchema.safeParse(body);
      if (xhr.status === 201 && created.success) return resolve({ kind: 'accepted', batch: created.data });
      const dup = BatchDuplicateSchema.safeParse(body);
      if (xhr.status === 409 && dup.success) return resolve({ kind: 'duplicate', batchId: dup.data.batchId, message: dup.data.error });
      const rejected = BatchRejectedSchema.safeParse(body);
      if ((xhr.status === 422 || xhr.status === 413) && rejected.success) return resolve({ kind: 'rejected', report: rejected.data, status: xhr.status });
      const message = body && typeof body === 'object' && 'error' in body ? String((body as { error: unknown }).error) : `The server answered ${xhr.status}.`;
      resolve({ kind: 'failed', message });
    };
    xhr.send(form);
  });
}
