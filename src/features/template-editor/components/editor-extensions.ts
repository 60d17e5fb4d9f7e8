import { css } from '@codemirror/lang-css';
import { html } from '@codemirror/lang-html';
import { type Extension, RangeSet, StateEffect, StateField, type Text } from '@codemirror/state';
import {
  Decoration,
  type DecorationSet,
  EditorView,
  GutterMarker,
  gutter,
  MatchDecorator,
  ViewPlugin,
  type ViewUpdate,
} from '@codemirror/view';

/**
 * CodeMirror extensions of the template editor: HTML highlighting for Handlebars sources with the
 * `{{…}}` expressions marked on top (CodeMirror's HTML grammar sees them as text), CSS for the
 * stylesheet, and the template's problems shown in the editor — a marker in a gutter of its own
 * and a tinted line — from the located problems the server returns.
 */

export interface EditorProblem {
  line: number;
  column: number | null;
  message: string;
}

const MUSTACHE = /\{\{~?[#/>^!&*]?[^}]*\}\}\}?/g;

const mustacheMatcher = new MatchDecorator({
  regexp: MUSTACHE,
  decoration: (match) =>
    Decoration.mark({
      class: /^\{\{~?[#/^]/.test(match[0])
        ? 'cm-mustache cm-mustache-block'
        : /^\{\{~?>/.test(match[0])
          ? 'cm-mustache cm-mustache-partial'
          : 'cm-mustache',
    }),
});

const mustacheHighlight = ViewPlugin.fromClass(
  class {
    decorations: DecorationSet;
    constructor(view: EditorView) {
      this.decorations = mustacheMatcher.createDeco(view);
    }
    update(update: ViewUpdate) {
      this.decorations = mustacheMatcher.updateDeco(update, this.decorations);
    }
  },
  { decorations: (plugin) => plugin.decorations },
);

export const setProblems = StateEffect.define<EditorProblem[]>();

class ProblemMarker extends GutterMarker {
  constructor(readonly message: string) {
    super();
  }
  override eq(other: GutterMarker) {
    return other instanceof ProblemMarker && other.message === this.message;
  }
  override toDOM() {
    const marker = document.createElement('span');
    marker.className = 'cm-problem-marker';
    marker.textContent = '!';
    marker.title = this.message;
    marker.setAttribute('aria-label', `Problem: ${this.message}`);
    return marker;
  }
}

interface ProblemMarks {
  lines: DecorationSet;
  markers: RangeSet<GutterMarker>;
}

function buildMarks(doc: Text, problems: EditorProblem[]): ProblemMarks {
  const byLine = new Map<number, string[]>();
  for (const problem of problems) {
    const line = Math.min(Math.max(problem.line, 1), doc.lines);
    byLine.set(line, [...(byLine.get(line) ?? []), problem.message]);
  }
  const sorted = [...byLine.entries()].sort(([a], [b]) => a - b);
  return {
    lines: Decoration.set(
      sorted.map(([line]) => Decoration.line({ class: 'cm-problem-line' }).range(doc.line(line).from)),
    ),
    markers: RangeSet.of(
      sorted.map(([line, messages]) => new ProblemMarker(messages.join('\n')).range(doc.line(line).from)),
    ),
  };
}

const problemField = StateField.define<ProblemMarks>({
  create: () => ({ lines: Decoration.none, markers: RangeSet.empty }),
  update(value, transaction) {
    let next = {
      lines: value.lines.map(transaction.changes),
      markers: value.markers.map(transaction.changes),
    };
    for (const effect of transaction.effects) {
      if (effect.is(setProblems)) next = buildMarks(transaction.state.doc, effect.value);
    }
    return next;
  },
  provide: (field) => EditorView.decorations.from(field, (value) => value.lines),
});

const problemGutter = gutter({
  class: 'cm-problem-gutter',
  markers: (view) => view.state.field(problemField).markers,
});

/** A theme colour of `src/styles.css`, mixed with transparency for tints. */
const token = (name: string, percent = 100) =>
  percent === 100
    ? `var(--color-${name})`
    : `color-mix(in srgb, var(--color-${name}) ${percent}%, transparent)`;

const theme = EditorView.theme({
  '&': { fontSize: '13px', height: '100%' },
  '.cm-scroller': { fontFamily: 'ui-monospace, SFMono-Regular, Menlo, Consolas, monospace' },
  '.cm-mustache': {
    color: token('template-expression'),
    backgroundColor: token('template-expression', 8),
    borderRadius: '2px',
  },
  '.cm-mustache-block': { fontWeight: '600' },
  '.cm-mustache-partial': { color: token('ledger'), fontWeight: '600' },
  '.cm-problem-gutter': { width: '1.1em' },
  '.cm-problem-marker': {
    display: 'inline-block',
    width: '1em',
    color: 'white',
    backgroundColor: token('template-problem'),
    borderRadius: '50%',
    textAlign: 'center',
    fontWeight: '700',
    fontSize: '11px',
    lineHeight: '1.4',
    cursor: 'help',
  },
  '.cm-problem-line': { backgroundColor: token('template-problem', 9) },
});

export function languageFor(part: string): Extension {
  return part === 'stylesheet' ? css() : [html(), mustacheHighlight];
}

export const problemExtensions: Extension = [problemField, problemGutter, theme];
