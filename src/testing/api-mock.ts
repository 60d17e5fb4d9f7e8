import { vi } from 'vitest';

/** One request an island made, as the server would see it. */
export interface RecordedRequest {
  method: string;
  url: URL;
  headers: Headers;
  body: BodyInit | null | undefined;
}

/** Answers one kind of request; the first route whose method and path match answers. */
export interface ApiRoute {
  method?: string;
  path: string | RegExp;
  respond: (request: RecordedRequest) => Response | Promise<Response>;
}

/** A JSON answer as the Express app sends it. */
export function json(status: number, body: unknown): Response {
  return new Response(JSON.stringify(body), { status, headers: { 'content-type': 'application/json' } });
}

/** A refusal in the shape of `server/http/error-handler.ts`: `{ error: { status, message, details? } }`. */
export function refusal(status: number, message: string, details?: unknown): Response {
  return json(status, { error: { status, message, ...(details === undefined ? {} : { details }) } });
}

/**
 * Replaces `fetch` with a fake server holding `routes`; a request no route matches fails the
 * test with a 501 naming it. Returns every request made, in order.
 */
export function mockApi(routes: ApiRoute[]): RecordedRequest[] {
  const requests: RecordedRequest[] = [];
  vi.stubGlobal(
    'fetch',
    vi.fn(async (input: string | URL, init: RequestInit = {}) => {
      const request: RecordedRequest = {
        method: init.method ?? 'GET',
        url: new URL(String(input), window.location.origin),
        headers: new Headers(init.headers),
        body: init.body,
      };
      requests.push(request);
      const route = routes.find(
        (candidate) =>
          (candidate.method ?? 'GET') === request.method &&
          (typeof candidate.path === 'string'
            ? candidate.path === request.url.pathname
            : candidate.path.test(request.url.pathname)),
      );
      if (!route) return refusal(501, `No mock for ${request.method} ${request.url.pathname}`);
      return route.respond(request);
    }),
  );
  return requests;
}

/** Puts the CSRF token in the page as the server's layout does. */
export function setCsrfToken(token: string) {
  document.head.querySelector('meta[name="csrf-token"]')?.remove();
  const meta = document.createElement('meta');
  meta.name = 'csrf-token';
  meta.content = token;
  document.head.append(meta);
}
