import { useSession } from '../../state/session';

/** Fetches an API file with the access token and hands it to the browser as a download. */
export async function downloadFile(path: string, fallbackName: string): Promise<void> {
  const token = useSession.getState().accessToken;
  const res = await fetch(`/api${path}`, { headers: token ? { authorization: `Bearer ${token}` } : {}, credentials: 'same-origin' });
  if (!res.ok) throw new Error(`The server answered ${res.status}.`);
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
  const token = useSession.getState().accessToken;
  const form = new FormData();
  form.append('file', file, file.name ?? 'file');
  const res = await fetch(`/api${path}`, { method: 'POST', body: form, headers: token ? { authorization: `Bearer ${token}` } : {}, credentials: 'same-origin' });
  const body = await res.json().catch(() => ({}));
  if (!res.ok) throw new Error((body as { error?: { message?: string } }).error?.message ?? `The server answered ${res.status}.`);
  return body;
}
