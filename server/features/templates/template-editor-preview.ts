import { eq } from 'drizzle-orm';
import type { TemplatePreviewResponse, TemplateProblemItem } from '../../../shared/api/templates.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import { organisations } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { getAnalysisRun } from '../analysis/index.ts';
import type { FigureMarkup, ReportContext } from '../reports/index.ts';
import {
  checkReportTemplate,
  compileReportTemplate,
  RenderFailure,
  type ReportTemplateSource,
  renderFigureMarkup,
  reportFixture,
  reportInput,
  TEMPLATE_VARIABLES,
  TemplateError,
} from '../reports/index.ts';
import { stripActiveContent } from './template-editor-sanitise.ts';

/**
 * The template editor's live preview and the check a version must pass before it is saved or
 * published.
 *
 * Preview: the draft is compiled and filled in with a real analysis run of the organisation (or,
 * when it has none, the invented sample built into Rateledger, `server/features/reports/render/render-fixture.ts`),
 * exactly as a report would be — same context, same SVG figures — and returned as HTML with every
 * script stripped (`stripActiveContent`). The figures of a run are drawn once and kept (runs are
 * immutable), so typing in the editor only re-runs the template, not vega.
 *
 * Check: a version must compile (syntax, refused constructs, unknown helpers and partials) and
 * must fill in without error with the invented sample, which has every kind of content a report
 * can hold (several batches, Arrhenius, Q1E, an exclusion) — so a misspelt variable, which strict
 * Handlebars only finds while rendering, is refused at save time rather than failing a report.
 */

type Sample = { label: string; context: ReportContext; figures: ReadonlyMap<string, FigureMarkup> };

const FIGURE_CACHE_LIMIT = 8;
const figureCache = new Map<string, Promise<Map<string, FigureMarkup>>>();
let fixtureSample: Promise<Sample> | null = null;
let checkSample: Sample | null = null;

const PLACEHOLDER_SVG = '<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 10 10" role="img"></svg>';

/** The invented sample with placeholder figures: enough for the trial render of the check. */
function sampleForCheck(): Sample {
  if (!checkSample) {
    const fixture = reportFixture();
    const figures = new Map(
      fixture.figures.map((figure, index) => [
        figure.id,
        { number: index + 1, title: figure.title, description: figure.description, svg: PLACEHOLDER_SVG },
      ]),
    );
    checkSample = { label: 'invented sample', context: fixture.context, figures };
  }
  return checkSample;
}

function fixturePreviewSample(): Promise<Sample> {
  fixtureSample ??= (async () => {
    const fixture = reportFixture();
    return {
      label: `Invented sample analysis: ${fixture.context.study.product} (built into Rateledger)`,
      context: fixture.context,
      figures: await renderFigureMarkup(fixture.figures),
    };
  })();
  fixtureSample.catch(() => {
    fixtureSample = null;
  });
  return fixtureSample;
}

function cachedFigures(key: string, draw: () => Promise<Map<string, FigureMarkup>>) {
  let entry = figureCache.get(key);
  if (!entry) {
    entry = draw();
    entry.catch(() => figureCache.delete(key));
    if (figureCache.size >= FIGURE_CACHE_LIMIT) figureCache.delete(figureCache.keys().next().value as string);
    figureCache.set(key, entry);
  }
  return entry;
}

async function runSample(db: Executor, user: SessionUser, runId: number): Promise<Sample> {
  const run = await getAnalysisRun(db, user.organisationId, runId);
  const [organisation] = await db
    .select()
    .from(organisations)
    .where(eq(organisations.id, user.organisationId));
  if (!organisation) throw new HttpError(404, 'Your organisation was not found.');
  const now = new Date();
  const person = { id: user.id, fullName: user.fullName };
  try {
    const { context, figures } = reportInput({
      // The preview shows the analysis part; attached temperature logs print with real versions.
      temperatureLogs: [],
      organisation: { id: organisation.id, name: organisation.name, timeZone: organisation.timeZone },
      report: {
        id: 0,
        reportNumber: 'RL-PREVIEW',
        title: `${run.study.title} — kinetics report`,
        createdAt: now,
        author: person,
      },
      version: { id: 0, versionNumber: 1, paperSize: 'a4', createdAt: now, requestedBy: person },
      run,
      template: {
        versionId: 0,
        versionNumber: 0,
        sha256: '',
        source: { body: '', partials: {}, stylesheet: '' },
      },
    });
    const markup = await cachedFigures(`${user.organisationId}:${run.id}`, () => renderFigureMarkup(figures));
    return {
      label: `Analysis run ${run.id}: ${run.study.title} (${run.study.product})`,
      context,
      figures: markup,
    };
  } catch (error) {
    if (error instanceof RenderFailure) throw new HttpError(422, error.message);
    throw error;
  }
}

function render(
  source: ReportTemplateSource,
  sample: Sample,
): { html: string } | { problems: TemplateProblemItem[] } {
  try {
    return {
      html: compileReportTemplate(source).render({
        context: sample.context,
        figures: sample.figures,
        paper: 'A4',
      }),
    };
  } catch (error) {
    if (error instanceof TemplateError) return { problems: error.problems };
    throw error;
  }
}

/** Every problem that keeps `source` from being saved or published; empty when it is fit for reports. */
export function templateProblems(source: ReportTemplateSource): TemplateProblemItem[] {
  const problems = checkReportTemplate(source);
  if (problems.length > 0) return problems;
  const trial = render(source, sampleForCheck());
  return 'problems' in trial ? trial.problems : [];
}

/** Describes a problem in one line: 'partial "letterhead", line 3, column 5: Unknown variable …'. */
export function describeProblem(problem: TemplateProblemItem): string {
  const where =
    problem.line === null ? problem.part : `${problem.part}, line ${problem.line}, column ${problem.column}`;
  return `${where}: ${problem.message}`;
}

const EXAMPLE_LENGTH = 90;

function exampleOf(value: unknown): string {
  if (value === null || value === undefined) return 'null (not set for this analysis)';
  if (value instanceof Date) return value.toISOString();
  if (Array.isArray(value)) {
    if (value.length === 0) return 'empty list';
    const primitives = value.every((item) => typeof item !== 'object' || item === null);
    return primitives
      ? `${value.length} item${value.length === 1 ? '' : 's'}: ${value.map(String).join(', ')}`
      : `${value.length} item${value.length === 1 ? '' : 's'}`;
  }
  if (typeof value === 'object') return `object with ${Object.keys(value).slice(0, 6).join(', ')}`;
  return String(value);
}

/** Each listed variable's value in the sample, shortened, for the editor's side panel. */
export function variableExamples(context: ReportContext): Record<string, string> {
  const examples: Record<string, string> = {};
  for (const variable of TEMPLATE_VARIABLES) {
    let value: unknown = context;
    for (const key of variable.path.replace(/\[\]$/, '').split('.')) {
      value =
        value !== null && typeof value === 'object' && Object.hasOwn(value, key)
          ? (value as Record<string, unknown>)[key]
          : undefined;
    }
    const text = exampleOf(value);
    examples[variable.path] = text.length > EXAMPLE_LENGTH ? `${text.slice(0, EXAMPLE_LENGTH - 1)}…` : text;
  }
  return examples;
}

/** Renders a draft for the editor: located problems, or the HTML without any script. */
export async function previewTemplate(
  db: Executor,
  user: SessionUser,
  input: { source: ReportTemplateSource; sampleRunId?: number | null | undefined },
): Promise<TemplatePreviewResponse> {
  const sample = input.sampleRunId
    ? await runSample(db, user, input.sampleRunId)
    : await fixturePreviewSample();
  const examples = variableExamples(sample.context);
  const problems = checkReportTemplate(input.source);
  if (problems.length > 0) return { html: null, problems, examples, sample: sample.label };
  const rendered = render(input.source, sample);
  if ('problems' in rendered)
    return { html: null, problems: rendered.problems, examples, sample: sample.label };
  return { html: stripActiveContent(rendered.html), problems: [], examples, sample: sample.label };
}
