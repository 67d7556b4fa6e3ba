import type { z } from 'zod';
import { errorBodySchema } from '@counterpoise/contracts/common';
import { ApiError, getCsrfToken } from './api-client.js';

export type UploadProgress = { loaded: number; total: number | null };

type UploadOptions = {
  /** Called as the browser sends the body; `total` is null when the size is not known. */
  onProgress?: (progress: UploadProgress) => void;
  signal?: AbortSignal;
};

function errorFrom(status: number, text: string): ApiError {
  let body: unknown = null;
  try {
    body = JSON.parse(text);
  } catch {
    // Not JSON (proxy page, empty body): a generic message below.
  }
  const parsed = errorBodySchema.safeParse(body);
  if (parsed.success) {
    const { code, message, details } = parsed.data.error;
    return new ApiError(status, code, message, details);
  }
  if (status === 413)
    return new ApiError(status, 'payload_too_large', 'The file is larger than the server accepts.');
  return new ApiError(
    status,
    status >= 500 || status === 0 ? 'internal' : 'unknown',
    status >= 500 || status === 0
      ? 'The server could not be reached or failed. Try again in a moment.'
      : `Upload failed (${status}).`,
  );
}

/**
 * Multipart POST with upload progress. fetch() cannot report request-body progress, so this
 * uses XMLHttpRequest. The browser sets the multipart Content-Type with its boundary; we only
 * add the CSRF header that every unsafe request needs.
 */
export function uploadForm<S extends z.ZodType>(
  path: string,
  form: FormData,
  schema: S,
  options: UploadOptions = {},
): Promise<z.output<S>> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `/api${path}`);
    xhr.withCredentials = true;
    xhr.setRequestHeader('Accept', 'application/json');
    const token = getCsrfToken();
    if (token) xhr.setRequestHeader('X-CSRF-Token', token);

    xhr.upload.onprogress = (event) => {
      options.onProgress?.({ loaded: event.loaded, total: event.lengthComputable ? event.total : null });
    };
    xhr.onerror = () =>
      reject(
        new ApiError(0, 'network', 'The server could not be reached. Check your connection and try again.'),
      );
    xhr.onabort = () => reject(new DOMException('The upload was cancelled.', 'AbortError'));
    xhr.onload = () => {
      if (xhr.status < 200 || xhr.status >= 300) {
        reject(errorFrom(xhr.status, xhr.responseText));
        return;
      }
      let json: unknown;
      try {
        json = JSON.parse(xhr.responseText);
      } catch {
        reject(
          new ApiError(
            xhr.status,
            'bad_response',
            'The server sent a response this page does not understand.',
          ),
        );
        return;
      }
      const parsed = schema.safeParse(json);
      if (!parsed.success) {
        reject(
          new ApiError(
            xhr.status,
            'bad_response',
            'The server sent a response this page does not understand.',
            {
              issues: parsed.error.issues,
            },
          ),
        );
        return;
      }
      resolve(parsed.data);
    };

    if (options.signal) {
      if (options.signal.aborted) {
        reject(new DOMException('The upload was cancelled.', 'AbortError'));
        return;
      }
      options.signal.addEventListener('abort', () => xhr.abort(), { once: true });
    }
    xhr.send(form);
  });
}

/** "1.2 MB" style sizes for upload progress and document lists. */
export function formatBytes(bytes: number): string {
  if (bytes < 1024) return `${bytes} B`;
  if (bytes < 1024 * 1024) return `${(bytes / 1024).toFixed(1)} kB`;
  return `${(bytes / (1024 * 1024)).toFixed(1)} MB`;
}
