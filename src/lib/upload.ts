/**
 * Multipart upload with a progress callback. fetch() cannot report upload progress, so this one
 * call goes through XMLHttpRequest; it answers and fails exactly like lib/apiClient.ts.
 */
import { ApiError } from './apiClient';

export interface UploadProgress {
  /** bytes of the request body sent so far */
  sentBytes: number;
  /** size of the request body, when the browser knows it */
  totalBytes: number | null;
}

export interface UploadOptions {
  onProgress?: (p: UploadProgress) => void;
  signal?: AbortSignal;
}

export interface UploadResult<T> {
  status: number;
  data: T;
}

function parseJson(text: string): unknown {
  if (!text) return undefined;
  try {
    return JSON.parse(text);
  } catch {
    return undefined;
  }
}

/** POST `form` to `/api/v1${path}`; resolves with the HTTP status and parsed JSON, or throws ApiError. */
export function sendMultipart<T>(path: string, form: FormData, opts: UploadOptions = {}): Promise<UploadResult<T>> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `/api/v1${path}`);
    xhr.withCredentials = true;
    xhr.responseType = 'text';

    xhr.upload.onprogress = (e) => opts.onProgress?.({ sentBytes: e.loaded, totalBytes: e.lengthComputable ? e.total : null });

    xhr.onload = () => {
      const data = parseJson(xhr.responseText);
      if (xhr.status >= 200 && xhr.status < 300) {
        resolve({ status: xhr.status, data: data as T });
        return;
      }
      reject(ApiError.fromAnswer(xhr.status, data, `The server answered ${xhr.status} ${xhr.statusText}`.trim()));
    };
    xhr.onerror = () => reject(new ApiError(0, { code: 'network', message: 'The upload did not reach the server. Check the connection and try again.' }));
    xhr.ontimeout = () => reject(new ApiError(0, { code: 'timeout', message: 'The upload took too long and was stopped.' }));
    xhr.onabort = () => reject(new ApiError(0, { code: 'aborted', message: 'The upload was cancelled.' }));

    if (opts.signal) {
      if (opts.signal.aborted) {
        reject(new ApiError(0, { code: 'aborted', message: 'The upload was cancelled.' }));
        return;
      }
      opts.signal.addEventListener('abort', () => xhr.abort(), { once: true });
    }
    xhr.send(form);
  });
}

/** Same as sendMultipart, for callers that only need the parsed JSON. */
export async function uploadMultipart<T>(path: string, form: FormData, opts: UploadOptions = {}): Promise<T> {
  return (await sendMultipart<T>(path, form, opts)).data;
}
