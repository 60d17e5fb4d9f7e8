import Handlebars from 'handlebars';
import { describe, expect, it } from 'vitest';
import { loadDefaultTemplate } from './template-default.ts';
import {
  checkReportTemplate,
  compileReportTemplate,
  type ReportTemplateSource,
  TemplateError,
} from './template-engine.ts';
import type { FigureMarkup } from './template-helpers.ts';

const source = (body: string, partials: Record<string, string> = {}): ReportTemplateSource => ({
  body,
  partials,
  stylesheet: '',
});
const render = (body: string, context: object, figures = new Map<string, FigureMarkup>()) =>
  compileReportTemplate(source(body)).render({ context, figures, paper: 'A4' });
const problemsOf = (body: string, partials: Record<string, string> = {}) =>
  checkReportTemplate(source(body, partials));

describe('escaping', () => {
  it('HTML-escapes every value (Handlebars escapeExpression: & < > " \' ` =)', () => {
    const html = render('<p title="{{v}}">{{v}}</p>', { v: '<script>alert("x")</script> & \'y\'' });
    expect(html).toBe(
      '<p title="&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; &#x27;y&#x27;">&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; &#x27;y&#x27;</p>',
    );
  });

  it('refuses triple braces and {{& }} with their line and column', () => {
    const problems = problemsOf('<p>\n  {{{study.product}}}\n{{& study.product}}</p>');
    expect(problems.map(({ line, column }) => [line, column])).toEqual([
      [2, 3],
      [3, 1],
    ]);
    expect(problems[0]?.message).toMatch(/without HTML escaping/);
  });

  it('escapes every cell of the table helper', () => {
    const html = render('{{table t}}', {
      t: { caption: '<b>c</b>', columns: [{ key: 'a', label: '<i>A</i>' }], rows: [{ a: '<img src=x>' }] },
    });
    expect(html).not.toMatch(/<img|<b>|<i>/);
    expect(html).toContain('<td>&lt;img src&#x3D;x&gt;</td>');
    expect(html).toContain('<th scope="col">&lt;i&gt;A&lt;/i&gt;</th>');
  });
});

describe('errors with line and column', () => {
  it('reports a syntax error where the parser stopped', () => {
    const [problem] = problemsOf('ok\n  {{sig value=}}');
    expect(problem).toMatchObject({ part: 'body', line: 2, column: 15 });
    expect(problem?.message).toMatch(/Parse error/);
  });

  it('reports a block closed by the wrong name', () => {
    const [problem] = problemsOf('line 1\n{{#if a}}\n{{/each}}');
    expect(problem).toMatchObject({ line: 2 });
    expect(problem?.message).toMatch(/if doesn't match each/);
  });

  it('reports unknown partials, unknown helpers, computed partials and decorators', () => {
    const messages = problemsOf(
      '{{> nowhere}}\n{{shout study.product}}\n{{> (lookup this "x")}}\n{{* inline}}',
    ).map((problem) => `${problem.line}:${problem.column} ${problem.message}`);
    expect(messages).toEqual([
      '1:1 Unknown partial "nowhere".',
      '2:1 Unknown helper "shout".',
      '3:1 Partials must be named ({{> name}}), not computed.',
      '4:1 Decorators {{* …}} are not allowed in report templates.',
    ]);
  });

  it('names a misspelt variable (strict mode) with its place, in the partial it is in', () => {
    const template = compileReportTemplate(
      source('<h1>x</h1>\n{{> letterhead}}', { letterhead: '<p>\n {{organisation.nmae}}</p>' }),
    );
    try {
      template.render({ context: { organisation: { name: 'Lab' } }, figures: new Map(), paper: 'A4' });
      expect.unreachable();
    } catch (error) {
      expect(error).toBeInstanceOf(TemplateError);
      expect((error as TemplateError).problems).toEqual([
        {
          part: 'partial "letterhead"',
          line: 2,
          column: 4,
          message: expect.stringMatching(/Unknown variable "nmae"/),
        },
      ]);
    }
  });

  it('locates a helper misused in the template', () => {
    try {
      render('a\n  b {{sig value 40}}', { value: 1 });
      expect.unreachable();
    } catch (error) {
      expect((error as TemplateError).problems[0]).toMatchObject({ line: 2, column: 5 });
      expect((error as TemplateError).message).toMatch(
        /line 2, column 5: sig: the number of significant figures/,
      );
    }
  });

  it('says a caption once when the description repeats the title (issue 12 §4; common practice)', () => {
    const figures = new Map([
      [
        'arrhenius',
        {
          number: 1,
          title: 'Arrhenius plot',
          description: 'Arrhenius plot: ln k against 1000/T with the fitted line.',
          svg: '<svg></svg>',
        },
      ],
      [
        'q1e',
        {
          number: 2,
          title: 'Q1E shelf life at 25 °C',
          description: 'Batch results and mean line.',
          svg: '<svg></svg>',
        },
      ],
    ]);
    const html = render('{{figure "arrhenius"}}{{figure "q1e"}}', {}, figures);
    expect(html).toContain(
      'Figure 1.</span> Arrhenius plot: ln k against 1000/T with the fitted line.</figcaption>',
    );
    expect(html.match(/Arrhenius plot/g)).toHaveLength(1);
    expect(html).toContain(
      'Figure 2.</span> Q1E shelf life at 25 °C. <span class="figure-description">Batch results and mean line.</span>',
    );
  });

  it('lists the known figures when a figure id does not exist', () => {
    const figures = new Map([['arrhenius', { number: 1, title: 't', description: 'd', svg: '<svg></svg>' }]]);
    expect(() => render('{{figure "nope"}}', {}, figures)).toThrow(/no figure "nope".*arrhenius/);
  });
});

describe('sandbox', () => {
  it('resolves prototype paths to nothing (prototype access protections on)', () => {
    const context = { study: { product: 'P' } };
    const html = render(
      '[{{lookup this "__proto__"}}][{{#with (lookup this "constructor")}}{{name}}{{/with}}][{{lookup (lookup this "constructor") "name"}}][{{#each (lookup this "__proto__")}}{{@key}}{{/each}}][{{study.__proto__}}][{{#with study}}{{constructor}}{{/with}}]',
      context,
    );
    expect(html).toBe('[][][][][][]');
  });

  it('refuses {{constructor.constructor}} with a located error that leaks no source or environment', () => {
    try {
      render('x {{constructor.constructor}}', {});
      expect.unreachable();
    } catch (error) {
      const text = (error as Error).message;
      expect(text).toMatch(/line 1, column 5: Unknown variable "constructor"/);
      expect(text).not.toMatch(/function|native code|process|env|PATH/);
    }
  });

  it('does not see helpers registered on the global Handlebars instance, nor the log helper', () => {
    Handlebars.registerHelper('globalOnly', () => 'leaked');
    try {
      expect(problemsOf('{{globalOnly 1}}')[0]?.message).toBe('Unknown helper "globalOnly".');
      expect(problemsOf('{{log "x"}}')[0]?.message).toBe('Unknown helper "log".');
    } finally {
      Handlebars.unregisterHelper('globalOnly');
    }
  });

  it('keeps a stylesheet from closing its style element', () => {
    const html = compileReportTemplate({
      body: '{{reportStyles}}',
      partials: {},
      stylesheet: 'p{}</style><script>x()</script>',
    }).render({
      context: {},
      figures: new Map(),
      paper: 'Letter',
    });
    expect(html.match(/<\/style>/g)).toHaveLength(1);
    expect(html).toContain('@page{size:letter;}');
  });
});

describe('the default template', () => {
  it('passes every check', () => {
    expect(checkReportTemplate(loadDefaultTemplate())).toEqual([]);
  });
});
