import { authorizedFetch, parseError } from '../../api/client';

/** Fetches an API file with the access token (refreshed when needed) and hands it to the browser as a download. */
export async function downloadFile(path: string, fallbackName: string): Promise<void> {
  const res = await authorizedFetch(path);
  if (!res.ok) throw await parseError(res);
  const name = /filename="([^"]+)"/.exec(res.headers.get('content-disposition') ?? '')?.[1] ?? fallbackName;
  const blob = await res.blob();
  if (typeof document === 'undefined') throw new Error('Downloads work in the browser.');
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/** Uploads one file as multipart (field "file"). */
export async function uploadFile(path: string, file: Blob & { name?: string }): Promise<unknown> {
  const form = new FormData();
  form.append('file', file, file.name ?? 'file');
  const res = await authorizedFetch(path, { method: 'POST', body: form });
  if (!res.ok) throw await parseError(res);
  return res.json().catch(() => ({}));
}
