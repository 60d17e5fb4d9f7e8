import type { ColumnMapping } from '../../../../shared/intake/column-mapping.ts';

/** Query keys of an upload being mapped. */
export const uploadKeys = {
  all: ['uploads'] as const,
  /** The preview of an upload, with a dry run of `mapping` (null: the sheets alone). */
  preview: (uploadId: string, mapping: ColumnMapping | null) =>
    [...uploadKeys.all, uploadId, 'preview', mapping] as const,
};
