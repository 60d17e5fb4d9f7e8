import type Handlebars from 'handlebars';
import {
  interval,
  isoDateTime,
  isoDay,
  percent,
  significant,
  TemplateValueError,
} from './template-format.ts';

/**
 * The helpers a report template may call, registered on one isolated Handlebars environment.
 *
 * Safety rule: a helper returns a plain string, which Handlebars HTML-escapes, unless it builds
 * markup itself from escaped parts (`table`, `figure`); only then does it return a `SafeString`.
 * Figures are SVG drawn by `server/features/reports/figures/render-svg.ts` from Rateledger's own specs, handed to
 * the render as private data (`@figureSvg`), never taken from the template.
 *
 * `TEMPLATE_HELPERS` describes every helper for the template editor.
 */

type Env = typeof Handlebars;
type HelperOptions = Handlebars.HelperOptions;

export interface TemplateHelperDescription {
  name: string;
  usage: string;
  description: string;
}

export const TEMPLATE_HELPERS: readonly TemplateHelperDescription[] = [
  {
    name: 'sig',
    usage: '{{sig value 3 unit}}',
    description:
      'A number to 3 (1–15) significant figures, followed by its unit when given; "not estimable" for a missing value.',
  },
  {
    name: 'interval',
    usage: '{{interval pair 3 unit}}',
    description: 'An interval [low, high] as "low to high unit", both ends to the same significant figures.',
  },
  {
    name: 'percent',
    usage: '{{percent fraction 1}}',
    description: 'A fraction (0.123) as a percentage ("12.3 %") with the given decimals.',
  },
  {
    name: 'isoDate',
    usage: '{{isoDate date}}',
    description:
      "ISO 8601 date and time with the UTC offset of the organisation's time zone, e.g. 2026-12-01T14:05:00+00:00.",
  },
  {
    name: 'isoDay',
    usage: '{{isoDay date}}',
    description: "The calendar day (ISO 8601, YYYY-MM-DD) in the organisation's time zone.",
  },
  {
    name: 'table',
    usage: '{{table dataTable}}',
    description:
      'A table object of the context ({ caption, columns, rows }) as an HTML table with header cells; every cell escaped.',
  },
  {
    name: 'figure',
    usage: '{{figure "figure-id"}}',
    description:
      'The figure with this id, as inline SVG with its number and caption. See figures[] for the ids of this report.',
  },
  {
    name: 'hasFigure',
    usage: '{{#if (hasFigure "arrhenius")}}…{{/if}}',
    description: 'True when the report has a figure with this id.',
  },
  {
    name: 'ifEquals',
    usage: '{{#ifEquals a b}}…{{else}}…{{/ifEquals}}',
    description: 'Shows the block when both values are equal (===), else the {{else}} part.',
  },
  {
    name: 'eq',
    usage: '{{#if (eq a b)}}…{{/if}}',
    description: 'True when both values are equal (===), for use inside if/unless.',
  },
  {
    name: 'not',
    usage: '{{#if (not value)}}…{{/if}}',
    description: 'True when the value is empty, false, zero or missing.',
  },
  {
    name: 'join',
    usage: '{{join list ", "}}',
    description: 'The items of a list of text, joined with the separator.',
  },
  {
    name: 'default',
    usage: '{{default value "none"}}',
    description: 'The value, or the fallback text when the value is missing or empty.',
  },
  {
    name: 'reportStyles',
    usage: '{{reportStyles}}',
    description: "The template's stylesheet with the embedded fonts and page size; put it in <head>.",
  },
];

export interface TableColumn {
  key: string;
  label: string;
  align?: 'left' | 'right' | 'center';
}
export interface ReportTable {
  caption: string;
  columns: TableColumn[];
  rows: Record<string, string>[];
  /** Text shown in a single cell when there are no rows. */
  empty?: string;
  /**
   * Statements that several cells share, said once under the table as a numbered list; a cell
   * refers to one as "[n]". A line break in a cell's text ("\n") starts a new line in the cell.
   */
  notes?: string[];
}

export interface FigureMarkup {
  number: number;
  title: string;
  description: string;
  svg: string;
}

const escapeText = (hb: Env, value: unknown) =>
  hb.escapeExpression(value === null || value === undefined ? '' : String(value));

/** Tables of at most this many rows never break across pages (they fit on one with room to spare). */
export const WHOLE_TABLE_ROWS = 15;

function tableMarkup(hb: Env, table: unknown): string {
  if (!table || typeof table !== 'object' || !Array.isArray((table as ReportTable).columns)) {
    throw new TemplateValueError('table: expected a table object with columns and rows.');
  }
  const { caption, columns, rows, empty, notes } = table as ReportTable;
  const alignClass = (column: TableColumn) => (column.align ? ` class="align-${column.align}"` : '');
  const head = columns
    .map((column) => `<th scope="col"${alignClass(column)}>${escapeText(hb, column.label)}</th>`)
    .join('');
  const body =
    rows.length === 0
      ? `<tr><td colspan="${columns.length}">${escapeText(hb, empty ?? 'None.')}</td></tr>`
      : rows
          .map((row) => {
            const cells = columns.map((column) => {
              const cell = Object.hasOwn(row, column.key) ? row[column.key] : '';
              return `<td${alignClass(column)}>${escapeText(hb, cell).replace(/\n/g, '<br>')}</td>`;
            });
            return `<tr>${cells.join('')}</tr>`;
          })
          .join('');
  const captionHtml = caption ? `<caption>${escapeText(hb, caption)}</caption>` : '';
  // A short table is printed whole on one page, in a block that avoids breaking inside: Chromium
  // honours neither break-after inside a table nor break-inside on the table itself, so a table
  // breaking near a page foot could leave its caption and header row alone there. A long table
  // breaks between rows and repeats its header row.
  const tableElement = `<table class="report-table">${captionHtml}<thead><tr>${head}</tr></thead><tbody>${body}</tbody></table>`;
  const tableHtml =
    rows.length <= WHOLE_TABLE_ROWS ? `<div class="report-table-whole">${tableElement}</div>` : tableElement;
  if (!Array.isArray(notes) || notes.length === 0) return tableHtml;
  const items = notes.map((note) => `<li>${escapeText(hb, note)}</li>`).join('');
  return `${tableHtml}<ol class="table-notes" aria-label="Notes to the table">${items}</ol>`;
}

/**
 * The title and description of a caption, each said once: a description that opens with the
 * title ("Arrhenius plot: ln k against 1000/T…" under "Arrhenius plot") stands alone, and a title
 * followed by a description ends with a full stop.
 */
export function captionParts(figure: Pick<FigureMarkup, 'title' | 'description'>): {
  title: string;
  description: string;
} {
  const title = figure.title.trim();
  const description = figure.description.trim();
  if (description === '') return { title, description: '' };
  if (title === '' || description.toLowerCase().startsWith(title.toLowerCase().replace(/[.:]$/, ''))) {
    return { title: description, description: '' };
  }
  return { title: /[.:!?]$/.test(title) ? title : `${title}.`, description };
}

function figures(options: HelperOptions): Map<string, FigureMarkup> {
  const data = options.data as { figureSvg?: unknown } | undefined;
  return data?.figureSvg instanceof Map ? (data.figureSvg as Map<string, FigureMarkup>) : new Map();
}

function timeZoneOf(options: HelperOptions): string {
  const root = (options.data as { root?: { organisation?: { timeZone?: unknown } } } | undefined)?.root;
  const zone = root?.organisation?.timeZone;
  return typeof zone === 'string' && zone !== '' ? zone : 'UTC';
}

/** Numbers arrive from templates as numbers; the trailing argument of a helper is always the options object. */
const args = (list: unknown[]) => list.slice(0, -1);

export function registerTemplateHelpers(hb: Env): void {
  hb.registerHelper('sig', (...list: unknown[]) => {
    const [value, digits, unit] = args(list);
    return significant(value, digits ?? 3, unit);
  });
  hb.registerHelper('interval', (...list: unknown[]) => {
    const [bounds, digits, unit] = args(list);
    return interval(bounds, digits ?? 3, unit);
  });
  hb.registerHelper('percent', (...list: unknown[]) => {
    const [fraction, decimals] = args(list);
    return percent(fraction, decimals ?? 1);
  });
  hb.registerHelper('isoDate', (value: unknown, options: HelperOptions) =>
    isoDateTime(value, timeZoneOf(options)),
  );
  hb.registerHelper('isoDay', (value: unknown, options: HelperOptions) => isoDay(value, timeZoneOf(options)));
  hb.registerHelper('table', (table: unknown) => new hb.SafeString(tableMarkup(hb, table)));
  hb.registerHelper(
    'hasFigure',
    (id: unknown, options: HelperOptions) => typeof id === 'string' && figures(options).has(id),
  );
  hb.registerHelper('figure', (id: unknown, options: HelperOptions) => {
    const known = figures(options);
    const figure = typeof id === 'string' ? known.get(id) : undefined;
    if (!figure) {
      throw new TemplateValueError(
        `figure: no figure "${String(id)}" in this report; the figures are ${[...known.keys()].join(', ') || 'none'}.`,
      );
    }
    const { title, description } = captionParts(figure);
    const caption = `<figcaption><span class="figure-number">Figure ${figure.number}.</span> ${escapeText(hb, title)}${
      description ? ` <span class="figure-description">${escapeText(hb, description)}</span>` : ''
    }</figcaption>`;
    return new hb.SafeString(
      `<figure class="report-figure" id="figure-${escapeText(hb, id)}">${figure.svg}${caption}</figure>`,
    );
  });
  hb.registerHelper('ifEquals', function (this: unknown, a: unknown, b: unknown, options: HelperOptions) {
    return a === b ? options.fn(this) : options.inverse(this);
  });
  hb.registerHelper('eq', (a: unknown, b: unknown) => a === b);
  hb.registerHelper('not', (value: unknown) => !value || (Array.isArray(value) && value.length === 0));
  hb.registerHelper('join', (list: unknown, separator: unknown) => {
    if (!Array.isArray(list)) return '';
    return list.map((item) => String(item)).join(typeof separator === 'string' ? separator : ', ');
  });
  hb.registerHelper('default', (value: unknown, fallback: unknown) =>
    value === null || value === undefined || value === '' ? String(fallback ?? '') : value,
  );
}
