// @vitest-environment jsdom
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { projectPath } from '../../platform/config/project-root.ts';
import { compileReportTemplate, renderFigureMarkup, reportFixture } from '../reports/index.ts';
import { stripActiveContent } from './template-editor-sanitise.ts';

/**
 * The preview sanitiser against well-known script-injection vectors (OWASP "XSS Filter Evasion
 * Cheat Sheet", owasp.org/www-community/xss-filter-evasion-cheatsheet, and the HTML
 * tokenizer's comment rules, WHATWG HTML §13.2.5). Each output is parsed by an independent HTML
 * parser (jsdom's DOMParser, which implements the WHATWG parsing algorithm) and checked for anything that could
 * act: script-like elements, event-handler attributes, script URLs after entity decoding, URLs
 * that leave the document, and script in CSS once its comments and escapes are undone.
 */

const VECTORS = [
  '<script>alert(1)</script>',
  '<SCRIPT SRC=//x.invalid/x.js></SCRIPT>',
  '<script>alert(1)',
  '<img src=x onerror=alert(1)>',
  '<img src="x" ONERROR="alert(1)">',
  '<div/onclick=alert(1)>x</div>',
  '<a href="javascript:alert(1)">a</a>',
  '<a href="&#106;avascript:alert(1)">a</a>',
  '<a href="jav&#x09;ascript:alert(1)">a</a>',
  '<a href=" JAVASCRIPT:alert(1)">a</a>',
  '<a href="x" title=\'">\' onclick=alert(1)>a</a>',
  '<svg onload=alert(1)><circle r="1"/></svg>',
  '<svg><script>alert(1)</script></svg>',
  '<svg><a xlink:href="javascript:alert(1)"><text>t</text></a></svg>',
  '<svg><animate attributeName="href" to="javascript:alert(1)"/><set attributeName="href" to="javascript:alert(1)"/></svg>',
  '<math><a xlink:href="javascript:alert(1)">m</a></math>',
  '<iframe src="javascript:alert(1)"></iframe>',
  '<iframe srcdoc="&lt;script&gt;alert(1)&lt;/script&gt;"></iframe>',
  '<object data="javascript:alert(1)"></object><embed src="javascript:alert(1)">',
  '<meta http-equiv="refresh" content="0;url=javascript:alert(1)">',
  '<base href="javascript://"><link rel="stylesheet" href="https://x.invalid/s.css">',
  '<!--><script>alert(1)</script>-->',
  '<!---><script>alert(1)</script>-->',
  '<!-- a --!><script>alert(1)</script>',
  '<scr<script>ipt>alert(1)</script>',
  '<<script>script>alert(1)<</script>/script>',
  '<![CDATA[<script>alert(1)</script>]]>',
  '<?xml-stylesheet href="javascript:alert(1)"?>',
  '<form><button formaction="javascript:alert(1)">b</button></form>',
  '<input onfocus=alert(1) autofocus><details open ontoggle=alert(1)>',
  '<img src="data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==">',
  '<body onload="alert(1)"><p>x</p></body>',
];

/**
 * The classic vectors of the OWASP XSS Filter Evasion Cheat Sheet (same page), each named by
 * its heading there, and the namespace-confusion ("mutation XSS") vectors that follow from the
 * WHATWG parsing rules for foreign content (§13.2.6.5: inside <svg> and <math> a <style>'s text
 * is markup).
 */
const CHEAT_SHEET_VECTORS = [
  '<IMG SRC=JaVaScRiPt:alert(1)>', // "Case Insensitive XSS Attack Vector"
  '<IMG SRC=`javascript:alert(1)`>', // "Grave Accent Obfuscation"
  '<IMG """><SCRIPT>alert(1)</SCRIPT>">', // "Malformed IMG Tags"
  '<IMG SRC="jav\u0000ascript:alert(1);">', // "Null breaks up JavaScript directive"
  '<IMG SRC=" &#14;  javascript:alert(1);">', // "Spaces and Meta Chars Before the JavaScript"
  '<IMG SRC=&#x6A&#x61&#x76&#x61&#x73&#x63&#x72&#x69&#x70&#x74&#x3A&#x61&#x6C&#x65&#x72&#x74&#x28&#x31&#x29>', // "Hexadecimal HTML Character References Without Trailing Semicolons"
  '<SCRIPT/XSS SRC="http://x.invalid/xss.js"></SCRIPT>', // "Non-alpha-non-digit XSS"
  '<BODY onload!#$%&()*~+-_.,:;?@[/|\\]^`=alert(1)>', // "Non-alpha-non-digit XSS", handler
  '<iframe src=http://x.invalid/scriptlet.html <', // "Half Open HTML/JavaScript XSS Vector"
  '<svg/onload=alert(1)>', // "SVG Object Tag"
  '<svg><foreignObject><p onclick="alert(1)">x</p><script>alert(2)</script></foreignObject></svg>',
  '<svg><image href="javascript:alert(1)"/><use xlink:href="data:image/svg+xml;base64,PHN2Zy8+#x"/></svg>',
  '<svg><a><animate attributeName="href" values="javascript:alert(1)"/><text>t</text></a></svg>',
  '<IFRAME SRCDOC="<img src=x onerror=alert(1)>"></IFRAME>', // srcdoc without entities
  '<META HTTP-EQUIV="refresh" CONTENT="0;url=data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg">', // "META"
  '<META HTTP-EQUIV="refresh" CONTENT="0; URL=http://;URL=javascript:alert(1);">', // "META" with extra URL parameter
  '<META HTTP-EQUIV="Set-Cookie" Content="USERID=<SCRIPT>alert(1)</SCRIPT>">', // "Cookie Manipulation"
  '<BASE HREF="javascript:alert(1);//">', // "BASE Tag"
  '<LINK REL="stylesheet" HREF="javascript:alert(1);">', // "STYLE sheet"
  '<DIV STYLE="background-image: url(javascript:alert(1))">x</DIV>', // "DIV background-image"
  '<DIV STYLE="background-image:\\0075\\0072\\006C\\0028\'\\006a\\0061\\0076\\0061\\0073\\0063\\0072\\0069\\0070\\0074\\003a\\0061\\006c\\0065\\0072\\0074\\0028\\0031\\0029\'\\0029">x</DIV>', // "DIV background-image with unicoded XSS exploit"
  '<DIV STYLE="width: expression(alert(1));">x</DIV>', // "DIV expression"
  '<IMG STYLE="xss:expr/*XSS*/ession(alert(1))">', // "STYLE attribute using a comment to break up expression"
  "<STYLE>@im\\port'\\ja\\vasc\\ript:alert(1)';</STYLE>", // "STYLE tags with broken-up JavaScript for XSS"
  '<STYLE>.x{background-image:url("javascript:alert(1)");}</STYLE><p class="x">x</p>', // "STYLE tag using background-image"
  '<STYLE>li {list-style-image: url("javascript:alert(1)");}</STYLE><UL><LI>x</LI></UL>', // "List-style-image"
  '<XSS STYLE="behavior: url(xss.htc);">', // "Anonymous HTML with STYLE Attribute"
  '<STYLE>BODY{-moz-binding:url("http://x.invalid/xssmoz.xml#xss")}</STYLE>', // "-moz-binding"
  '<svg><style><img src=x onerror=alert(1)></style></svg>', // namespace confusion, SVG
  '<math><mtext><table><mglyph><style><img src=x onerror=alert(1)></style></mglyph></table></mtext></math>', // namespace confusion, MathML
  '<noscript><p title="</noscript><img src=x onerror=alert(1)>"></noscript>', // scripting is off in the sandbox: noscript is markup
  '<form action="javascript:alert(1)"><input type="image" formaction="javascript:alert(2)" src="x"></form>',
  '<object data="data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg=="></object>',
  '<a href="//x.invalid/">protocol-relative</a><img src="/api/admin/templates" alt="same origin">',
];

const ACTIVE_ELEMENTS = new Set(
  'script iframe frame frameset object embed applet base link set animate foreignobject'.split(' '),
);
// Browsers strip leading spaces and C0 control characters from a URL before reading its scheme.
const SCRIPT_URL = /^\s*(javascript|vbscript|data:(?!image\/))/i;
const withoutControls = (value: string) =>
  [...value].filter((character) => character.charCodeAt(0) > 0x1f).join('');
// The preview may point only inside itself or at an inline image.
const URL_ATTRIBUTES = new Set(['href', 'xlink:href', 'src', 'action', 'formaction', 'data', 'srcset']);
const INSIDE_URL = /^(#|data:image\/)/i;
// CSS as a browser reads it: comments gone, escapes decoded (CSS Syntax Level 3, §4.3.7).
const SCRIPT_IN_CSS = /expression\(|javascript:|vbscript:|binding|behavior/i;
const cssAsRead = (css: string) =>
  css
    .replace(/\/\*[\s\S]*?\*\//g, '')
    .replace(/\\([0-9a-f]{1,6})\s?/gi, (_, hex: string) => String.fromCodePoint(Number.parseInt(hex, 16)))
    .replace(/\\(.)/g, '$1')
    .replace(/\s/g, '');

function activeParts(html: string): string[] {
  const document = new DOMParser().parseFromString(html, 'text/html');
  const found: string[] = [];
  for (const element of document.querySelectorAll('*')) {
    const name = element.localName.toLowerCase();
    if (ACTIVE_ELEMENTS.has(name) || (name === 'meta' && element.hasAttribute('http-equiv')))
      found.push(`element ${element.localName}`);
    if (name === 'style' && SCRIPT_IN_CSS.test(cssAsRead(element.textContent ?? '')))
      found.push(`<style>${element.textContent}`);
    for (const attribute of element.attributes) {
      const value = withoutControls(attribute.value);
      if (attribute.name.toLowerCase().startsWith('on')) found.push(`attribute ${attribute.name}`);
      if (attribute.name === 'srcdoc' || SCRIPT_URL.test(value))
        found.push(`${attribute.name}="${attribute.value}"`);
      if (URL_ATTRIBUTES.has(attribute.name) && !INSIDE_URL.test(value.trim()))
        found.push(`outside URL ${attribute.name}="${attribute.value}"`);
      if (attribute.name === 'style' && SCRIPT_IN_CSS.test(cssAsRead(value)))
        found.push(`style="${attribute.value}"`);
    }
  }
  return found;
}

/** The document an HTML parser builds, written out: equal for markup that means the same. */
function parsed(html: string): string {
  const document = new DOMParser().parseFromString(html, 'text/html');
  const doctype = document.doctype ? `<!DOCTYPE ${document.doctype.name}>` : '';
  return `${doctype}${document.documentElement.outerHTML}`;
}

function defaultTemplate() {
  const folder = projectPath('templates', 'default');
  const read = (file: string) => readFileSync(path.join(folder, file), 'utf8');
  const partials: Record<string, string> = {};
  for (const file of readdirSync(path.join(folder, 'partials')))
    partials[path.basename(file, '.hbs')] = read(path.join('partials', file));
  return { body: read('report.hbs'), stylesheet: read('report.css'), partials };
}

describe('stripActiveContent', () => {
  it.each([...VECTORS, ...CHEAT_SHEET_VECTORS])('leaves nothing that can act in %s', (vector) => {
    const cleaned = stripActiveContent(`<p>before</p>${vector}<p>after</p>`);
    expect(activeParts(cleaned)).toEqual([]);
    expect(cleaned).not.toMatch(/<script/i);
    expect(cleaned).toContain('<p>before</p>');
  });

  it('the vectors are live before cleaning (the check can fail)', () => {
    for (const vectors of [VECTORS, CHEAT_SHEET_VECTORS]) {
      const live = vectors.filter((vector) => activeParts(`<p>before</p>${vector}`).length > 0);
      expect(live.length).toBeGreaterThan(vectors.length * 0.7);
    }
  });

  it('keeps ordinary report markup as it was', () => {
    const markup = [
      '<!DOCTYPE html>',
      '<html lang="en"><head><meta charset="utf-8"><title>A &amp; B</title><style>a > b { color: red; }</style></head>',
      '<body><p class="x" data-n="1">5 &lt; 6</p><a href="#figure-1">Figure 1</a>',
      '<img src="data:image/png;base64,AAAA" alt="">',
      '<svg viewBox="0 0 10 10"><rect width="10" height="10" fill="#fff"/><path d="M0 0L10 10"/></svg>',
      '<table><tr><td colspan="3">x</td></tr></table></body></html>',
    ].join('\n');
    // The same document once parsed: sanitize-html writes <br /> and lower-case SVG names
    // (viewbox), which the HTML parser reads back as they were.
    const cleaned = stripActiveContent(markup);
    expect(parsed(cleaned)).toBe(parsed(markup));
    expect(cleaned).toMatch(/^<!DOCTYPE html>\n<html lang="en">/);
  });

  it('keeps the shipped report, filled in and with its drawn figures, as it was', async () => {
    const fixture = reportFixture();
    const html = compileReportTemplate(defaultTemplate()).render({
      context: fixture.context,
      figures: await renderFigureMarkup(fixture.figures),
      paper: 'A4',
    });
    expect(html).toContain('<clipPath');
    expect(parsed(stripActiveContent(html))).toBe(parsed(html));
  });

  it('drops comments, and turns a stray < into text', () => {
    expect(stripActiveContent('<p>a<!-- note -->b</p>')).toBe('<p>ab</p>');
    expect(stripActiveContent('<p>1 <2</p>')).toBe('<p>1 &lt;2</p>');
  });
});

describe('stripActiveContent attribute quoting', () => {
  it('writes every kept attribute value in double quotes, escaping a double quote inside', () => {
    expect(stripActiveContent(`<p data-a='say "hi"' data-b=plain hidden>x</p>`)).toBe(
      '<p data-a="say &quot;hi&quot;" data-b="plain" hidden>x</p>',
    );
  });
});
