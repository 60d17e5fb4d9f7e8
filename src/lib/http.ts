import type { z } from 'zod';

/** The CSRF token the server put in the page's <meta name="csrf-token">. */
export function csrfToken(): string {
  return document.querySelector<HTMLMetaElement>('meta[name="csrf-token"]')?.content ?? '';
}

export class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
  ) {
    super(message);
  }
}

/** Fetches JSON from the app's API, checks `response.ok` and parses with the shared zod schema. */
export async function fetchJson<Schema extends z.ZodType>(
  url: string,
  schema: Schema,
  init: RequestInit = {},
): Promise<z.infer<Schema>> {
  const headers = new Headers(init.headers);
  headers.set('accept', 'application/json');
  if (init.method && init.method !== 'GET') headers.set('x-csrf-token', csrfToken());
  const response = await fetch(url, { ...init, headers, credentials: 'same-origin' });
  if (!response.ok) {
    const body = (await response.json().catch(() => null)) as { error?: { message?: string } } | null;
    throw new ApiError(response.status, body?.error?.message ?? `The server answered ${response.status}.`);
  }
  return schema.parse(await response.json());
}
