import { z } from 'zod';
import { noteSessionUse } from './session-activity.ts';

/**
 * The client's one way to call the API: every fetcher in `features/<feature>/api` goes through
 * `fetchJson`, and every refusal arrives as an `ApiError`.
 */

/** The CSRF token the server put in the page's <meta name="csrf-token">. */
export function csrfToken(): string {
  return document.querySelector<HTMLMetaElement>('meta[name="csrf-token"]')?.content ?? '';
}

/** A field the server named in a refusal (zod issues and service checks send `{ field, message }`). */
const fieldIssuesSchema = z.array(z.object({ field: z.string(), message: z.string() }));

/**
 * A call the server refused (or, with status 0, one that got no usable answer): its safe message
 * and the `details` of the JSON error body, as the server sent them — located problems of a file
 * or a template, or the fields of a form.
 */
export class ApiError extends Error {
  override readonly name = 'ApiError';

  constructor(
    readonly status: number,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
  }

  /** The details read with the shared schema that describes them; null when they are something else. */
  detailsAs<Schema extends z.ZodType>(schema: Schema): z.infer<Schema> | null {
    const parsed = schema.safeParse(this.details);
    return parsed.success ? parsed.data : null;
  }

  /** The fields the server named, in its order; empty when the details are not field issues. */
  fieldIssues(): { field: string; message: string }[] {
    return this.detailsAs(fieldIssuesSchema) ?? [];
  }

  /** Field → message, for forms that show each error beside its field (the first per field wins). */
  fieldErrors(): Record<string, string> {
    const errors: Record<string, string> = {};
    for (const issue of this.fieldIssues()) errors[issue.field] ??= issue.message;
    return errors;
  }
}

/** The server's JSON error body (`server/http/error-handler.ts`). */
const errorBodySchema = z.object({
  error: z.object({ message: z.string(), details: z.unknown().optional() }),
});

export interface ApiRequest extends Omit<RequestInit, 'body' | 'credentials'> {
  /** Sent as JSON with its content type. */
  json?: unknown;
  /** Sent as it is (a FormData for uploads). */
  body?: BodyInit;
}

/**
 * Fetches JSON from the app's API: sends the CSRF header on anything but GET, checks
 * `response.ok`, turns a refusal into an `ApiError`, and parses the answer with the shared zod schema.
 */
export async function fetchJson<Schema extends z.ZodType>(
  url: string,
  schema: Schema,
  { json, body, ...init }: ApiRequest = {},
): Promise<z.infer<Schema>> {
  const headers = new Headers(init.headers);
  headers.set('accept', 'application/json');
  if (init.method && init.method !== 'GET') headers.set('x-csrf-token', csrfToken());
  if (json !== undefined) headers.set('content-type', 'application/json');
  const payload = json !== undefined ? JSON.stringify(json) : body;
  const response = await fetch(url, {
    ...init,
    headers,
    credentials: 'same-origin',
    ...(payload === undefined ? {} : { body: payload }),
  });
  // The request rolled the session (unless it had ended, or the server failed): the sign-out
  // warning counts anew.
  if (response.status !== 401 && response.status < 500) noteSessionUse();
  if (!response.ok) {
    const refusal = errorBodySchema.safeParse(await response.json().catch(() => null));
    if (!refusal.success) throw new ApiError(response.status, `The server answered ${response.status}.`);
    throw new ApiError(response.status, refusal.data.error.message, refusal.data.error.details);
  }
  return schema.parse(await response.json());
}
