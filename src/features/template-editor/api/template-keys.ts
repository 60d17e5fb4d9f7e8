import type { TemplateSourceInput } from '../../../../shared/api/templates.ts';

/** Every query key of the template editor, so mutations invalidate through one place. */
export const templateKeys = {
  all: ['admin-templates'] as const,
  editor: (templateId: number) => [...templateKeys.all, 'editor', templateId] as const,
  version: (templateId: number, versionId: number) =>
    [...templateKeys.all, 'version', templateId, versionId] as const,
  diff: (templateId: number, from: number, to: number) =>
    [...templateKeys.all, 'diff', templateId, from, to] as const,
  preview: (source: TemplateSourceInput | null, sampleRunId: number | null) =>
    [...templateKeys.all, 'preview', sampleRunId, source] as const,
};
