import { z } from 'zod';

/**
 * The boundary of the report template editor (admin only): the organisation's templates with
 * their immutable numbered versions, one version's text, a live preview, saving a new version,
 * publishing (or rolling back to) a version, and the difference between two versions.
 *
 * A template's text has parts: the main source (`body`), its partials by name and its
 * stylesheet. Parts are addressed in problems and diffs as 'body', 'stylesheet' or
 * `partial "name"` — the names the template engine uses when it reports a problem.
 */

/** The JSON body parser accepts 100 kB; the parts together must stay under it. */
export const MAX_PART_LENGTH = 60_000;
export const MAX_NOTE_LENGTH = 500;
const PARTIAL_NAME = /^[a-z][a-z0-9-]*$/;

const partText = z.string().max(MAX_PART_LENGTH, `Keep each part under ${MAX_PART_LENGTH} characters.`);

export const templateSourceSchema = z.object({
  body: partText,
  partials: z.record(
    z.string().regex(PARTIAL_NAME, 'Partial names are lower-case letters, digits and -.'),
    partText,
  ),
  stylesheet: partText,
});
export type TemplateSourceInput = z.infer<typeof templateSourceSchema>;

export const templateIdParamSchema = z.object({ id: z.coerce.number().int().positive() });
export const templateVersionParamSchema = z.object({
  id: z.coerce.number().int().positive(),
  versionId: z.coerce.number().int().positive(),
});

/** A problem of a template, located (line and column are 1-based; null when the engine has none). */
export const templateProblemSchema = z.object({
  part: z.string(),
  line: z.number().int().nullable(),
  column: z.number().int().nullable(),
  message: z.string(),
});
export type TemplateProblemItem = z.infer<typeof templateProblemSchema>;

export const templateVersionSummarySchema = z.object({
  id: z.number().int(),
  versionNumber: z.number().int(),
  sha256: z.string(),
  note: z.string(),
  createdBy: z.string(),
  createdAt: z.string(),
  published: z.boolean(),
});
export type TemplateVersionSummary = z.infer<typeof templateVersionSummarySchema>;

export const templateSummarySchema = z.object({
  id: z.number().int(),
  name: z.string(),
  publishedVersionId: z.number().int().nullable(),
  publishedVersionNumber: z.number().int().nullable(),
  /** The template new reports use (the most recently published one of the organisation). */
  usedForNewReports: z.boolean(),
  versions: z.array(templateVersionSummarySchema),
});
export type TemplateSummary = z.infer<typeof templateSummarySchema>;

/** GET /api/admin/templates */
export const templateListResponseSchema = z.object({ templates: z.array(templateSummarySchema) });

export const sampleRunSchema = z.object({
  id: z.number().int(),
  label: z.string(),
});

export const templateVariableSchema = z.object({
  path: z.string(),
  description: z.string(),
  insert: z.string(),
});
export const templateHelperSchema = z.object({
  name: z.string(),
  usage: z.string(),
  description: z.string(),
});

/** GET /api/admin/templates/:id — what the editor needs to open. */
export const templateEditorResponseSchema = z.object({
  template: templateSummarySchema,
  sampleRuns: z.array(sampleRunSchema),
  variables: z.array(templateVariableSchema),
  helpers: z.array(templateHelperSchema),
});
export type TemplateEditorResponse = z.infer<typeof templateEditorResponseSchema>;

/** GET /api/admin/templates/:id/versions/:versionId */
export const templateVersionResponseSchema = z.object({
  version: templateVersionSummarySchema,
  source: templateSourceSchema,
});
export type TemplateVersionResponse = z.infer<typeof templateVersionResponseSchema>;

/**
 * POST /api/admin/templates/preview. `sampleRunId` null or missing: the invented sample analysis
 * built into Rateledger (for an organisation that has no analysis yet).
 */
export const templatePreviewRequestSchema = z.object({
  source: templateSourceSchema,
  sampleRunId: z.coerce.number().int().positive().nullable().optional(),
});
export type TemplatePreviewRequest = z.infer<typeof templatePreviewRequestSchema>;

export const templatePreviewResponseSchema = z.object({
  /** The rendered document with every script removed; null when the template has problems. */
  html: z.string().nullable(),
  problems: z.array(templateProblemSchema),
  /** Variable path → its value in the chosen sample, shortened, for the side panel. */
  examples: z.record(z.string(), z.string()),
  sample: z.string(),
});
export type TemplatePreviewResponse = z.infer<typeof templatePreviewResponseSchema>;

/** POST /api/admin/templates/:id/versions */
export const saveTemplateVersionRequestSchema = z.object({
  source: templateSourceSchema,
  note: z
    .string()
    .trim()
    .min(1, 'Say in a few words what changed.')
    .max(MAX_NOTE_LENGTH, `Keep the note under ${MAX_NOTE_LENGTH} characters.`),
});
export type SaveTemplateVersionRequest = z.infer<typeof saveTemplateVersionRequestSchema>;

export const saveTemplateVersionResponseSchema = z.object({ version: templateVersionSummarySchema });

export const MAX_PUBLISH_REASON_LENGTH = 500;

/**
 * POST /api/admin/templates/:id/publish — publishing an earlier version than the published one is
 * a rollback. A change to what new reports print is change-controlled (EU GMP Annex 11 §10): the
 * admin gives the reason, recorded in the audit trail, and confirms explicitly.
 */
export const publishTemplateVersionRequestSchema = z.object({
  versionId: z.coerce.number().int().positive(),
  reason: z
    .string({ error: 'Give the reason for this change; it is recorded in the audit trail.' })
    .trim()
    .min(1, 'Give the reason for this change; it is recorded in the audit trail.')
    .max(MAX_PUBLISH_REASON_LENGTH, `Keep the reason under ${MAX_PUBLISH_REASON_LENGTH} characters.`),
  confirmed: z.literal(true, {
    error: 'Confirm that new reports are to use this version.',
  }),
});
export type PublishTemplateVersionRequest = z.input<typeof publishTemplateVersionRequestSchema>;
export const publishTemplateVersionResponseSchema = z.object({
  publishedVersionId: z.number().int(),
  publishedVersionNumber: z.number().int(),
  previousVersionNumber: z.number().int().nullable(),
  rolledBack: z.boolean(),
});
export type PublishTemplateVersionResponse = z.infer<typeof publishTemplateVersionResponseSchema>;

/** GET /api/admin/templates/:id/diff?from=&to= (version ids). */
export const templateDiffQuerySchema = z.object({
  from: z.coerce.number({ error: 'Choose the version to compare from.' }).int().positive(),
  to: z.coerce.number({ error: 'Choose the version to compare with.' }).int().positive(),
});

export const diffLineSchema = z.object({
  kind: z.enum(['added', 'removed', 'context']),
  oldNumber: z.number().int().nullable(),
  newNumber: z.number().int().nullable(),
  text: z.string(),
});
export type DiffLine = z.infer<typeof diffLineSchema>;

export const diffPartSchema = z.object({
  part: z.string(),
  label: z.string(),
  status: z.enum(['unchanged', 'changed', 'added', 'removed']),
  added: z.number().int(),
  removed: z.number().int(),
  hunks: z.array(
    z.object({
      oldStart: z.number().int(),
      newStart: z.number().int(),
      lines: z.array(diffLineSchema),
    }),
  ),
});
export type DiffPart = z.infer<typeof diffPartSchema>;

export const templateDiffResponseSchema = z.object({
  from: templateVersionSummarySchema,
  to: templateVersionSummarySchema,
  parts: z.array(diffPartSchema),
});
export type TemplateDiffResponse = z.infer<typeof templateDiffResponseSchema>;

const USUAL_PARTIALS = ['letterhead', 'signatures', 'caution'];

/**
 * The parts of a template in the order the editor and the diff show them: the main template, the
 * usual partials (letterhead, signatures, caution), any other partials by name, the stylesheet.
 */
export function templatePartOrder(partials: Iterable<string>): string[] {
  const names = [...new Set(partials)];
  const ordered = [
    ...USUAL_PARTIALS.filter((name) => names.includes(name)),
    ...names.filter((name) => !USUAL_PARTIALS.includes(name)).sort(),
  ];
  return ['body', ...ordered.map((name) => `partial "${name}"`), 'stylesheet'];
}

/** The partial's name in a part key 'partial "name"', or null for 'body' and 'stylesheet'. */
export function partialName(part: string): string | null {
  return /^partial "(.+)"$/.exec(part)?.[1] ?? null;
}

export function partLabel(part: string): string {
  if (part === 'body') return 'Main template';
  if (part === 'stylesheet') return 'Stylesheet (CSS)';
  return `Partial: ${partialName(part) ?? part}`;
}
