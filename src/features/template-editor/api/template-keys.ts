import type { TemplateSourceInput } from '../../../../shared/api/templates.ts';

/** Two versions to compare, by id. */
export interface VersionPair {
  from: number;
  to: number;
}

/** Every query key of the template editor, so mutations invalidate through one place. */
export const templateKeys = {
  all: ['admin-templates'] as const,
  editor: (templateId: number) => [...templateKeys.all, 'editor', templateId] as const,
  publications: (templateId: number) => [...templateKeys.all, 'publications', templateId] as const,
  version: (templateId: number, versionId: number | null) =>
    [...templateKeys.all, 'version', templateId, versionId] as const,
  diff: (templateId: number, pair: VersionPair | null) =>
    [...templateKeys.all, 'diff', templateId, pair?.from ?? null, pair?.to ?? null] as const,
  preview: (source: TemplateSourceInput | null, sampleRunId: number | null) =>
    [...templateKeys.all, 'preview', sampleRunId, source] as const,
};
