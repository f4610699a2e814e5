// Fetching from the monitor. Errors come back as the contract's { error, field, problem } and are
// turned into one readable sentence for the page.

import { tokenStore } from './tokenStore.js';

export class ApiError extends Error {
  constructor(readonly status: number, message: string) {
    super(message);
    this.name = 'ApiError';
  }
}

function headers(extra: Record<string, string> = {}): Record<string, string> {
  const token = tokenStore.get();
  return token ? { ...extra, Authorization: `Bearer ${token}` } : extra;
}

async function explain(res: Response, url: string): Promise<ApiError> {
  let text = `${res.status} ${res.statusText}`;
  try {
    const body = (await res.json()) as { error?: string; field?: string; problem?: string };
    text = [body.error, body.field && `(${body.field})`, body.problem].filter(Boolean).join(' ') || text;
  } catch {
    /* not JSON: keep the status line */
  }
  return new ApiError(res.status, `${url}: ${text}`);
}

export async function getJson<T>(url: string, signal?: AbortSignal): Promise<T> {
  const res = await fetch(url, { headers: headers({ Accept: 'application/json' }), signal, cache: 'no-store' });
  if (!res.ok) throw await explain(res, url);
  return (await res.json()) as T;
}

export async function postJson<T>(url: string, body: unknown): Promise<T> {
  const res = await fetch(url, {
    method: 'POST',
    headers: headers({ 'Content-Type': 'application/json', Accept: 'application/json' }),
    body: JSON.stringify(body ?? {}),
  });
  if (!res.ok) throw await explain(res, url);
  return (await res.json()) as T;
}
