import { partialName, type TemplateSourceInput, templatePartOrder } from '../../../shared/api/templates.ts';

/**
 * The editor's draft: a template source addressed part by part with the keys the server uses in
 * problems and diffs ('body', 'stylesheet', 'partial "name"'). Pure functions; the draft is
 * replaced, never mutated, so React sees each change.
 */

export function draftParts(source: TemplateSourceInput): string[] {
  return templatePartOrder(Object.keys(source.partials));
}

export function readPart(source: TemplateSourceInput, part: string): string {
  if (part === 'body') return source.body;
  if (part === 'stylesheet') return source.stylesheet;
  const name = partialName(part);
  return name !== null ? (source.partials[name] ?? '') : '';
}

export function writePart(source: TemplateSourceInput, part: string, text: string): TemplateSourceInput {
  if (part === 'body') return { ...source, body: text };
  if (part === 'stylesheet') return { ...source, stylesheet: text };
  const name = partialName(part);
  return name === null ? source : { ...source, partials: { ...source.partials, [name]: text } };
}

export function sameSource(a: TemplateSourceInput, b: TemplateSourceInput): boolean {
  if (a.body !== b.body || a.stylesheet !== b.stylesheet) return false;
  const names = Object.keys(a.partials);
  return (
    names.length === Object.keys(b.partials).length &&
    names.every((name) => Object.hasOwn(b.partials, name) && a.partials[name] === b.partials[name])
  );
}

/** Which parts differ from the saved version (shown as a dot on their tab). */
export function changedParts(draft: TemplateSourceInput, base: TemplateSourceInput): Set<string> {
  const parts = new Set([...draftParts(draft), ...draftParts(base)]);
  return new Set([...parts].filter((part) => readPart(draft, part) !== readPart(base, part)));
}

export const PARTIAL_NAME_PATTERN = /^[a-z][a-z0-9-]*$/;
