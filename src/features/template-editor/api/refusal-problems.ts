import { z } from 'zod';
import { type TemplateProblemItem, templateProblemSchema } from '../../../../shared/api/templates.ts';
import { ApiError } from '../../../lib/http.ts';

/** The located problems of a refused save or publish (a template that does not check); else none. */
export function refusalProblems(error: unknown): TemplateProblemItem[] {
  return error instanceof ApiError ? (error.detailsAs(z.array(templateProblemSchema)) ?? []) : [];
}
