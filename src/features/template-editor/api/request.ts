import { z } from 'zod';
import { type TemplateProblemItem, templateProblemSchema } from '../../../../shared/api/templates.ts';
import { csrfToken } from '../../../lib/http.ts';

/** A call the server refused: its message and, for a template that does not check, every located problem. */
export class TemplateRequestRefused extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly problems: TemplateProblemItem[],
  ) {
    super(message);
  }
}

const refusalSchema = z.object({
  error: z.object({ message: z.string(), details: z.unknown().optional() }),
});

/** JSON to and from the template admin API; checks `response.ok` and parses with the shared schema. */
export async function templateRequest<Schema extends z.ZodType>(
  url: string,
  schema: Schema,
  init: { method?: 'GET' | 'POST'; body?: unknown; signal?: AbortSignal } = {},
): Promise<z.infer<Schema>> {
  const headers: Record<string, string> = { accept: 'application/json' };
  if (init.method === 'POST') {
    headers['content-type'] = 'application/json';
    headers['x-csrf-token'] = csrfToken();
  }
  const response = await fetch(url, {
    method: init.method ?? 'GET',
    headers,
    credentials: 'same-origin',
    ...(init.body === undefined ? {} : { body: JSON.stringify(init.body) }),
    ...(init.signal ? { signal: init.signal } : {}),
  });
  if (!response.ok) {
    const refusal = refusalSchema.safeParse(await response.json().catch(() => null));
    const message = refusal.success ? refusal.data.error.message : `The server answered ${response.status}.`;
    const problems = z
      .array(templateProblemSchema)
      .safeParse(refusal.success ? refusal.data.error.details : []);
    throw new TemplateRequestRefused(response.status, message, problems.success ? problems.data : []);
  }
  return schema.parse(await response.json());
}
