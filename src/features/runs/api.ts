import { queryOptions } from '@tanstack/react-query';
import { runListSchema, runSchema, uploadResultSchema, type Run, type UploadResult } from '@shared/api/runs.ts';
import { ApiError, apiFetch, csrfHeader } from '@/lib/api.ts';

export const runKeys = {
  all: ['runs'] as const,
  list: () => [...runKeys.all, 'list'] as const,
  detail: (id: string) => [...runKeys.all, 'detail', id] as const,
};

const isBusy = (run: Run) => run.state !== 'ready' && run.state !== 'rejected';

export const runListQuery = () =>
  queryOptions({
    queryKey: runKeys.list(),
    queryFn: async () => runListSchema.parse(await apiFetch('/api/runs')).runs,
    // Poll while anything is still being processed, so progress moves on its own.
    refetchInterval: (query) => (query.state.data?.some(isBusy) ? 1500 : false),
  });

export const runQuery = (id: string) =>
  queryOptions({
    queryKey: runKeys.detail(id),
    queryFn: async () => runSchema.parse((await apiFetch<{ run: unknown }>(`/api/runs/${encodeURIComponent(id)}`)).run),
    refetchInterval: (query) => (query.state.data && isBusy(query.state.data) ? 1500 : false),
  });

/**
 * Uploads one file with XMLHttpRequest, because fetch cannot report upload progress.
 * onProgress receives 0..1 as bytes leave the browser.
 */
export function uploadRun(file: File, model: string, onProgress: (fraction: number) => void, signal?: AbortSignal): Promise<UploadResult> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', '/api/runs');
    xhr.responseType = 'text';
    for (const [name, value] of Object.entries(csrfHeader())) xhr.setRequestHeader(name, value);
    xhr.upload.onprogress = (e) => {
      if (e.lengthComputable) onProgress(e.loaded / e.total);
    };
    xhr.onload = () => {
      let body: unknown = null;
      try {
        body = JSON.parse(xhr.responseText);
      } catch {
        /* not JSON: handled below */
      }
      if (xhr.status >= 200 && xhr.status < 300) {
        resolve(uploadResultSchema.parse(body));
        return;
      }
      const err = (body as { error?: { code?: string; message?: string } } | null)?.error;
      reject(new ApiError(xhr.status, err?.code ?? `http_${xhr.status}`, err?.message ?? `The server answered ${xhr.status}.`));
    };
    xhr.onerror = () => reject(new ApiError(0, 'network', 'The upload could not reach the server. Nothing was stored.'));
    xhr.onabort = () => reject(new ApiError(0, 'aborted', 'Upload cancelled. Nothing was stored.'));
    signal?.addEventListener('abort', () => xhr.abort());
    const form = new FormData();
    // Text fields go before the file: the server reads them as the file starts streaming.
    if (model.trim()) form.append('model', model.trim());
    form.append('file', file, file.name);
    xhr.send(form);
  });
}
