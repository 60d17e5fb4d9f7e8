import Handlebars from 'handlebars';

/**
 * Static checks of a report template before it is compiled or published: Handlebars syntax
 * errors, and constructs a report template may not use, each reported with its line and column
 * (1-based) so the template editor can point at them.
 *
 * Refused, and why:
 * - `{{{value}}}` and `{{& value}}` print a value without HTML escaping. Every value is escaped;
 *   the helpers that build markup (`table`, `figure`, `reportStyles`) return it already safe.
 * - Dynamic partials `{{> (expression)}}` and decorators `{{* …}}`: the partial set is fixed.
 * - A partial that does not exist, and a helper call (a name with arguments) to a helper that
 *   does not exist.
 *
 * Reference: Handlebars language guide and AST (handlebarsjs.com/guide, spec in
 * handlebars-lang/handlebars.js `docs/compiler-api.md`).
 *
 * Throws nothing: problems are returned.
 *
 * Example: checkTemplateSyntax('a\n{{{x}}}', 'body', { partials: [], helpers: [] }) gives one problem
 * at line 2, column 1.
 */

export interface TemplateProblem {
  /** 'body', 'stylesheet' or `partial "name"`. */
  part: string;
  line: number | null;
  column: number | null;
  message: string;
}

type Node = hbs.AST.Node;
type Location = hbs.AST.SourceLocation | undefined;

const at = (part: string, loc: Location, message: string): TemplateProblem => ({
  part,
  line: loc?.start.line ?? null,
  column: loc ? loc.start.column + 1 : null,
  message,
});

class ReportTemplateVisitor extends Handlebars.Visitor {
  readonly problems: TemplateProblem[] = [];
  constructor(
    private readonly part: string,
    private readonly known: { partials: ReadonlySet<string>; helpers: ReadonlySet<string> },
  ) {
    super();
  }

  private checkCall(node: { path: Node; params: Node[]; hash?: hbs.AST.Hash; loc: Location }) {
    const path = node.path as hbs.AST.PathExpression;
    const isCall = node.params.length > 0 || (node.hash?.pairs.length ?? 0) > 0;
    if (path.type === 'PathExpression' && isCall && !path.data && path.parts.length === 1) {
      const name = path.parts[0] as string;
      if (!this.known.helpers.has(name))
        this.problems.push(at(this.part, node.loc, `Unknown helper "${name}".`));
    }
  }

  override MustacheStatement(node: hbs.AST.MustacheStatement) {
    if (!node.escaped) {
      this.problems.push(
        at(
          this.part,
          node.loc,
          'Triple braces {{{…}}} and {{& …}} print a value without HTML escaping; use {{…}}.',
        ),
      );
    }
    this.checkCall(node);
    super.MustacheStatement(node);
  }

  override SubExpression(node: hbs.AST.SubExpression) {
    this.checkCall(node);
    super.SubExpression(node);
  }

  override BlockStatement(node: hbs.AST.BlockStatement) {
    this.checkCall(node);
    super.BlockStatement(node);
  }

  private checkPartial(node: hbs.AST.PartialStatement | hbs.AST.PartialBlockStatement) {
    const name = node.name as hbs.AST.PathExpression;
    if (name.type !== 'PathExpression') {
      this.problems.push(at(this.part, node.loc, 'Partials must be named ({{> name}}), not computed.'));
    } else if (!this.known.partials.has(name.original)) {
      this.problems.push(at(this.part, node.loc, `Unknown partial "${name.original}".`));
    }
  }

  override PartialStatement(node: hbs.AST.PartialStatement) {
    this.checkPartial(node);
    super.PartialStatement(node);
  }

  override PartialBlockStatement(node: hbs.AST.PartialBlockStatement) {
    this.checkPartial(node);
    super.PartialBlockStatement(node);
  }

  override DecoratorBlock(node: hbs.AST.DecoratorBlock) {
    this.problems.push(at(this.part, node.loc, 'Decorators {{* …}} are not allowed in report templates.'));
  }

  override Decorator(node: hbs.AST.Decorator) {
    this.problems.push(at(this.part, node.loc, 'Decorators {{* …}} are not allowed in report templates.'));
  }
}

/** Line and column of the token where Handlebars' parser stopped (its lexer keeps them). */
function parseErrorLocation(): { line: number; column: number } | null {
  const lexer = (
    Handlebars as unknown as {
      Parser?: { lexer?: { yylloc?: { first_line: number; first_column: number } } };
    }
  ).Parser?.lexer;
  const loc = lexer?.yylloc;
  return loc ? { line: loc.first_line, column: loc.first_column + 1 } : null;
}

export function checkTemplateSyntax(
  source: string,
  part: string,
  known: { partials: Iterable<string>; helpers: Iterable<string> },
): TemplateProblem[] {
  let program: hbs.AST.Program;
  try {
    program = Handlebars.parse(source);
  } catch (error) {
    const exception = error as Error & { lineNumber?: number; column?: number };
    const firstLine = exception.message.split('\n')[0] ?? 'Syntax error';
    if (exception.lineNumber !== undefined) {
      return [
        {
          part,
          line: exception.lineNumber,
          column: (exception.column ?? 0) + 1,
          message: firstLine.replace(/ - \d+:\d+$/, ''),
        },
      ];
    }
    const where = parseErrorLocation();
    const expected = exception.message.split('\n').at(-1) ?? '';
    const detail = expected.startsWith('Expecting')
      ? `${firstLine.replace(/ on line \d+:$/, '')}: ${expected}`
      : firstLine;
    return [{ part, line: where?.line ?? null, column: where?.column ?? null, message: detail }];
  }
  const visitor = new ReportTemplateVisitor(part, {
    partials: new Set(known.partials),
    helpers: new Set(known.helpers),
  });
  visitor.accept(program);
  return visitor.problems;
}
