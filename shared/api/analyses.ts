import { z } from 'zod';

/**
 * The boundary of analysis runs: what a client may send to run the engine on a dataset or to
 * exclude a point, and what the server answers. One schema per boundary, used by the server to
 * validate and by the islands to type their calls.
 */

/** A reason shorter than this says nothing a reviewer could check ("bad", "outlier"). */
export const MIN_EXCLUSION_REASON_LENGTH = 10;
export const MAX_EXCLUSION_REASON_LENGTH = 500;

export const exclusionReasonSchema = z
  .string({ error: 'Give the reason for excluding this point.' })
  .trim()
  .min(
    MIN_EXCLUSION_REASON_LENGTH,
    `Give the reason for excluding this point in at least ${MIN_EXCLUSION_REASON_LENGTH} characters (what happened, and the record that shows it).`,
  )
  .max(MAX_EXCLUSION_REASON_LENGTH, `Keep the reason under ${MAX_EXCLUSION_REASON_LENGTH} characters.`);

/**
 * One excluded point: which series, which observation (its 0-based index in the dataset's
 * series, or its time — and value, when replicates share a time), and why.
 */
export const exclusionSchema = z
  .object({
    seriesId: z.string({ error: 'Name the series the point belongs to.' }).trim().min(1, 'Name the series.'),
    observationIndex: z.coerce.number().int().min(0).optional(),
    time: z.coerce.number().optional(),
    value: z.coerce.number().optional(),
    reason: exclusionReasonSchema,
  })
  .refine((exclusion) => exclusion.observationIndex !== undefined || exclusion.time !== undefined, {
    message: 'Choose the point: give its observation number or its time.',
    path: ['observationIndex'],
  });
export type Exclusion = z.infer<typeof exclusionSchema>;

/** Engine options an analyst may choose; limits, direction and temperature come from the study. */
export const analysisOptionsSchema = z
  .object({
    confidenceLevel: z.coerce.number().gt(0.5).lt(1).default(0.95),
    errorModel: z.enum(['auto', 'constant', 'proportional']).default('auto'),
    /** Fix the reaction order (as in ICH shelf-life work); the data decide when left out. */
    order: z.union([z.literal(0), z.literal(1), z.literal(2)]).optional(),
  })
  .strict();
export type AnalysisOptions = z.infer<typeof analysisOptionsSchema>;

/** POST /api/datasets/:datasetId/analyses */
export const runAnalysisRequestSchema = z
  .object({
    options: analysisOptionsSchema.default({ confidenceLevel: 0.95, errorModel: 'auto' }),
    exclusions: z.array(exclusionSchema).max(1000).default([]),
  })
  .strict();
export type RunAnalysisRequest = z.input<typeof runAnalysisRequestSchema>;

/** POST /api/analyses/:id/exclusions (and the form on the analysis page): one more excluded point. */
export const excludePointRequestSchema = z.object({
  seriesId: z.string({ error: 'Choose the series.' }).trim().min(1, 'Choose the series.'),
  observationIndex: z.coerce.number({ error: 'Choose the point.' }).int().min(0, 'Choose the point.'),
  reason: exclusionReasonSchema,
});
export type ExcludePointRequest = z.infer<typeof excludePointRequestSchema>;

export const runAnalysisResponseSchema = z.object({
  runId: z.number().int(),
  supersedesRunId: z.number().int().nullable(),
});
export type RunAnalysisResponse = z.infer<typeof runAnalysisResponseSchema>;

export const idParamSchema = z.object({ id: z.coerce.number().int().positive() });
export const datasetIdParamSchema = z.object({ datasetId: z.coerce.number().int().positive() });

/** One figure of the analysis screen: a Vega-Lite spec, built on the server from the stored result. */
export const analysisFigureSchema = z.object({
  id: z.string(),
  title: z.string(),
  description: z.string(),
  group: z.string(),
  spec: z.record(z.string(), z.unknown()),
});
export type AnalysisFigure = z.infer<typeof analysisFigureSchema>;

/**
 * GET /api/analyses/:id/figures?group=series-N|dataset (all figures without a group); a further
 * attribute of a multi-attribute run prefixes its groups with "attribute-N-" (issue 15 §1).
 */
export const figuresQuerySchema = z.object({
  group: z
    .string()
    .regex(/^(attribute-\d+-)?(series-\d+|dataset)$/)
    .optional(),
});

/** GET /api/analyses/:id/figures */
export const analysisFiguresResponseSchema = z.object({ figures: z.array(analysisFigureSchema) });
export type AnalysisFiguresResponse = z.infer<typeof analysisFiguresResponseSchema>;
