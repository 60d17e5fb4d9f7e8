/**
 * The upload and column-mapping boundary, shared by the mapping island and the upload routes:
 * the size limit, the preview the island shows, the import request and both of its answers
 * (the stored dataset, or every problem with its cell reference).
 *
 * Example: `importRequestSchema.parse({ mapping: { timeColumn: 'Month', timeUnit: 'month',
 * valueColumn: 'Assay' } })` gives the mapping with its defaults (`headerRow: 1`, …).
 */
import { z } from 'zod';
import { columnMappingSchema } from '../intake/column-mapping.ts';

/** Largest upload accepted, in bytes (10 MiB: a 100,000-row workbook is about 2 MB). */
export const UPLOAD_SIZE_LIMIT_BYTES = 10 * 1024 * 1024;
/** How many rows of each sheet the preview shows. */
export const PREVIEW_ROW_COUNT = 15;
/** The file field of the multipart upload form. */
export const UPLOAD_FIELD = 'file';

export function formatBytes(bytes: number): string {
  if (bytes >= 1024 * 1024) return `${Number((bytes / (1024 * 1024)).toFixed(1))} MB`;
  if (bytes >= 1024) return `${Number((bytes / 1024).toFixed(1))} kB`;
  return `${bytes} bytes`;
}

export const uploadResponseSchema = z.object({
  uploadId: z.number().int(),
  sha256: z.string(),
  mapUrl: z.string(),
});
export type UploadResponse = z.infer<typeof uploadResponseSchema>;

/** A cell as the preview shows it: the text a person sees, and what kind of content it is. */
export const previewCellSchema = z.object({
  text: z.string(),
  kind: z.enum(['empty', 'number', 'text', 'date', 'boolean', 'formula-without-value']),
});
export type PreviewCell = z.infer<typeof previewCellSchema>;

export const sheetPreviewSchema = z.object({
  name: z.string(),
  rowCount: z.number().int(),
  columnCount: z.number().int(),
  /** The first rows, from row 1 (1-based row = index + 1). */
  rows: z.array(z.array(previewCellSchema)),
  /** Merged blocks as spreadsheet ranges ("A1:B1"). */
  merges: z.array(z.string()),
  /** 1-based row that looks like the header row; 0 when none does. */
  headerGuess: z.number().int(),
});
export type SheetPreview = z.infer<typeof sheetPreviewSchema>;

export const savedMappingSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  mapping: columnMappingSchema,
});
export type SavedMapping = z.infer<typeof savedMappingSchema>;

export const intakeProblemSchema = z.object({
  where: z.string().optional(),
  message: z.string(),
  text: z.string(),
});

/** A dry run of the chosen mapping over the whole sheet: what an import would give. */
export const mappingCheckSchema = z.object({
  ok: z.boolean(),
  problems: z.array(intakeProblemSchema),
  warnings: z.array(intakeProblemSchema),
  /** 1-based rows holding a replicate (another row has the same time in the same series). */
  replicateRows: z.array(z.number().int()),
  seriesCount: z.number().int(),
  pointCount: z.number().int(),
});
export type MappingCheck = z.infer<typeof mappingCheckSchema>;

export const previewResponseSchema = z.object({
  upload: z.object({
    id: z.number().int(),
    studyId: z.number().int(),
    fileName: z.string(),
    format: z.enum(['xlsx', 'csv']),
    sizeBytes: z.number().int(),
    sha256: z.string(),
  }),
  sheets: z.array(sheetPreviewSchema),
  /** Saved mappings whose header signature matches a sheet of this file. */
  savedMappings: z.array(savedMappingSchema),
  check: mappingCheckSchema.nullable(),
});
export type PreviewResponse = z.infer<typeof previewResponseSchema>;

export const importRequestSchema = z.object({
  mapping: columnMappingSchema,
  /** Save the mapping under this name for the next workbook of the same layout. */
  saveMappingAs: z.string().trim().min(1).max(120).optional(),
  /**
   * Why the same upload is imported again with the same mapping; without it such an import is
   * refused (409) because it would only make a second identical dataset.
   */
  duplicateReason: z.string().trim().min(1, 'Give the reason for importing this again.').max(2000).optional(),
});
export type ImportRequest = z.input<typeof importRequestSchema>;

export const importedSeriesSchema = z.object({
  id: z.string(),
  /** The study attribute the series measures, when the mapping names attributes. */
  attribute: z.string().optional(),
  batch: z.string().optional(),
  temperatureC: z.number().optional(),
  points: z.number().int(),
  distinctTimes: z.number().int(),
  firstTime: z.number(),
  lastTime: z.number(),
  timeUnit: z.string(),
  valueUnit: z.string(),
});

export const importResponseSchema = z.object({
  datasetId: z.number().int(),
  sha256: z.string(),
  pointCount: z.number().int(),
  series: z.array(importedSeriesSchema),
  warnings: z.array(z.string()),
  savedMappingId: z.number().int().nullable(),
});
export type ImportResponse = z.infer<typeof importResponseSchema>;

/** The answer of the analysis endpoint (owned by the analysis runs): the new run's id. */
export const runAnalysisResponseSchema = z.object({ runId: z.number().int() });
