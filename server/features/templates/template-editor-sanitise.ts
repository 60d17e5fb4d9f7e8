import sanitizeHtml from 'sanitize-html';

/**
 * Removes everything that could act from a rendered template preview, so the HTML the editor
 * shows carries no script at all — even when an admin's template holds literal `<script>` or
 * `onload=` markup (Handlebars escapes values, not the template's own markup).
 *
 * It is one layer of three: the preview also sits in an `<iframe sandbox>` without
 * `allow-scripts`, and under the editor page's policy `script-src 'self'`, so nothing inline
 * could run even if this missed something.
 *
 * How: sanitize-html (htmlparser2 underneath) parses the markup and writes a new document from
 * allow-lists, so what comes out is only what it wrote itself:
 * - Tags: the HTML a report is made of (document, sections, text, lists, tables, figures,
 *   images), the SVG the figures are drawn in (without `script`, `foreignObject`, `set` and
 *   `animate*`, which can rewrite a link to `javascript:`) and presentational MathML. Anything
 *   else loses its tag; `script`, `foreignObject`, `iframe`, `object`, `template`, `textarea`,
 *   `option` and `xmp` lose their content too.
 * - Attributes: named per tag; none is an event handler or `srcdoc`. URL attributes keep only
 *   a fragment (`#…`) or an inline image (`data:image/png|jpeg|gif|webp;…`); `meta` with
 *   `http-equiv` keeps no attribute (no refresh).
 * - CSS: a `<style>` element or `style` attribute whose text, once CSS escapes and comments are
 *   undone, holds `expression(`, `javascript:`, `vbscript:`, `-moz-binding` or `behavior:` is
 *   dropped, and so is a `<style>` holding `<`: inside `<svg>` or `<math>` a browser reads a
 *   style's text as markup, where the parser here reads it as text (the "namespace confusion"
 *   mutation XSS). Other `url(…)`s in CSS are left to the preview's Content-Security-Policy
 *   (`img-src 'self' data:`, `font-src 'self' data:`).
 * - Comments, processing instructions and CDATA are dropped; a leading doctype is written back
 *   as `<!DOCTYPE html>` so the preview lays out in standards mode, as the printed report does.
 *
 * The output is the same document once parsed, not the same characters: void elements are
 * written `<br />`, and SVG names come out lower-case (`viewbox`), which an HTML parser restores
 * (WHATWG HTML, "adjust SVG attributes").
 *
 * Throws nothing. Example: stripActiveContent('<p onclick="x()">a</p><script>x()</script>') is
 * '<p>a</p>'.
 */

const HTML_TAGS = [
  ...['html', 'head', 'body', 'title', 'meta', 'style'],
  ...['address', 'article', 'aside', 'footer', 'header', 'hgroup', 'main', 'nav', 'section'],
  ...['h1', 'h2', 'h3', 'h4', 'h5', 'h6'],
  ...['blockquote', 'dd', 'div', 'dl', 'dt', 'figcaption', 'figure', 'hr', 'li', 'menu', 'ol', 'p'],
  ...['pre', 'ul', 'details', 'summary'],
  ...['a', 'abbr', 'b', 'bdi', 'bdo', 'br', 'cite', 'code', 'data', 'del', 'dfn', 'em', 'i', 'ins'],
  ...['kbd', 'mark', 'q', 'rp', 'rt', 'ruby', 's', 'samp', 'small', 'span', 'strong', 'sub', 'sup'],
  ...['time', 'u', 'var', 'wbr'],
  ...['caption', 'col', 'colgroup', 'table', 'tbody', 'td', 'tfoot', 'th', 'thead', 'tr'],
  'img',
];
// Lower-case: htmlparser2 lower-cases names, and the browser's parser restores SVG's camel case.
const SVG_TAGS = [
  ...['svg', 'g', 'defs', 'desc', 'symbol', 'use', 'path', 'rect', 'circle', 'ellipse', 'line'],
  ...['polyline', 'polygon', 'text', 'tspan', 'textpath', 'clippath', 'mask', 'pattern', 'marker'],
  ...['lineargradient', 'radialgradient', 'stop', 'image'],
];
const MATHML_TAGS = [
  ...['math', 'mi', 'mn', 'mo', 'ms', 'mtext', 'mrow', 'msub', 'msup', 'msubsup', 'mfrac', 'msqrt'],
  ...['mroot', 'mover', 'munder', 'munderover', 'mtable', 'mtr', 'mtd', 'mspace', 'mstyle'],
  ...['mpadded', 'mphantom'],
];
const SVG_ATTRIBUTES = [
  ...['width', 'height', 'x', 'y', 'x1', 'y1', 'x2', 'y2', 'cx', 'cy', 'r', 'rx', 'ry', 'd', 'points'],
  ...['viewbox', 'preserveaspectratio', 'xmlns', 'xmlns:xlink', 'version', 'transform', 'href'],
  ...['xlink:href', 'fill', 'fill-opacity', 'fill-rule', 'stroke', 'stroke-width', 'stroke-opacity'],
  ...['stroke-dasharray', 'stroke-dashoffset', 'stroke-linecap', 'stroke-linejoin'],
  ...['stroke-miterlimit', 'opacity', 'clip-path', 'clip-rule', 'clippathunits', 'mask'],
  ...['maskunits', 'maskcontentunits', 'font-family', 'font-size', 'font-weight', 'font-style'],
  ...['text-anchor', 'dominant-baseline', 'alignment-baseline', 'baseline-shift', 'letter-spacing'],
  ...['word-spacing', 'text-decoration', 'dx', 'dy', 'rotate', 'textlength', 'lengthadjust'],
  ...['startoffset', 'display', 'visibility', 'pointer-events', 'color', 'offset', 'stop-color'],
  ...['stop-opacity', 'gradientunits', 'gradienttransform', 'spreadmethod', 'fx', 'fy', 'fr'],
  ...['patternunits', 'patterncontentunits', 'patterntransform', 'markerwidth', 'markerheight'],
  ...['markerunits', 'refx', 'refy', 'orient', 'marker-start', 'marker-mid', 'marker-end'],
  ...['shape-rendering', 'text-rendering', 'vector-effect', 'paint-order', 'overflow'],
];
const MATHML_ATTRIBUTES = [
  ...['display', 'displaystyle', 'scriptlevel', 'mathvariant', 'mathsize', 'mathcolor'],
  ...['mathbackground', 'form', 'fence', 'separator', 'lspace', 'rspace', 'stretchy', 'symmetric'],
  ...['maxsize', 'minsize', 'largeop', 'movablelimits', 'accent', 'accentunder', 'linethickness'],
  ...['width', 'height', 'depth', 'voffset', 'columnspan', 'rowspan'],
];
const GLOBAL_ATTRIBUTES = ['class', 'id', 'lang', 'dir', 'title', 'role', 'hidden', 'style', 'translate'];

const ALLOWED_ATTRIBUTES: Record<string, string[]> = {
  '*': [...GLOBAL_ATTRIBUTES, 'aria-*', 'data-*'],
  html: ['xmlns'],
  meta: ['charset', 'name', 'content'],
  a: ['href', 'name', ...SVG_ATTRIBUTES],
  img: ['src', 'alt', 'width', 'height'],
  td: ['colspan', 'rowspan', 'headers', 'width', 'height'],
  th: ['colspan', 'rowspan', 'headers', 'scope', 'abbr', 'width', 'height'],
  col: ['span', 'width'],
  colgroup: ['span', 'width'],
  table: ['width'],
  ol: ['start', 'reversed', 'type'],
  li: ['value'],
  time: ['datetime'],
  data: ['value'],
  del: ['datetime', 'cite'],
  ins: ['datetime', 'cite'],
  q: ['cite'],
  blockquote: ['cite'],
  details: ['open'],
  ...Object.fromEntries(SVG_TAGS.map((tag) => [tag, SVG_ATTRIBUTES])),
  ...Object.fromEntries(MATHML_TAGS.map((tag) => [tag, MATHML_ATTRIBUTES])),
};

// Attributes a browser reads as a URL to follow or load.
const URL_ATTRIBUTES = [
  ...['href', 'src', 'xlink:href', 'action', 'formaction', 'poster', 'background', 'data'],
  ...['srcset', 'ping', 'lowsrc', 'dynsrc', 'codebase', 'cite', 'longdesc', 'manifest'],
];
// Disallowed tags whose content is dropped with them (the rest keep their text).
const CONTENT_DROPPED_TAGS = ['foreignobject', 'iframe', 'object', 'template'];
const SAFE_URL = /^(#|data:image\/(png|jpeg|gif|webp);)/i;
const SCRIPT_IN_CSS = /expression\(|javascript:|vbscript:|-moz-binding|behavior:/;
const DOCTYPE = /^\s*<!doctype\s/i;

/** CSS as a browser reads it: comments gone, escapes (`\65`, `\e `, `\:`) decoded, no spaces. */
function normalisedCss(css: string): string {
  return css
    .replace(/\/\*[\s\S]*?(\*\/|$)/g, '')
    .replace(/\\([0-9a-fA-F]{1,6})\s?/g, (_, hex: string) => {
      const code = Number.parseInt(hex, 16);
      return code > 0 && code <= 0x10ffff ? String.fromCodePoint(code) : '\ufffd';
    })
    .replace(/\\(.)/g, '$1')
    .replace(/\s+/g, '')
    .toLowerCase();
}

const scriptInCss = (css: string) => SCRIPT_IN_CSS.test(normalisedCss(css));

function withoutActiveAttributes(tagName: string, attribs: sanitizeHtml.Attributes): sanitizeHtml.Tag {
  if (tagName === 'meta' && 'http-equiv' in attribs) return { tagName, attribs: {} };
  const kept: sanitizeHtml.Attributes = {};
  for (const [name, value] of Object.entries(attribs)) {
    if (URL_ATTRIBUTES.includes(name) && !SAFE_URL.test(value.trim())) continue;
    if (name === 'style' && scriptInCss(value)) continue;
    kept[name] = value;
  }
  return { tagName, attribs: kept };
}

const POLICY: sanitizeHtml.IOptions = {
  allowedTags: [...HTML_TAGS, ...SVG_TAGS, ...MATHML_TAGS],
  // `style` is needed for the report's own stylesheet; its text is checked by exclusiveFilter.
  allowVulnerableTags: true,
  disallowedTagsMode: 'discard',
  nonTextTags: [...['script', 'style', 'textarea', 'option', 'xmp'], ...CONTENT_DROPPED_TAGS],
  allowedAttributes: ALLOWED_ATTRIBUTES,
  // An empty attribute is written bare (`hidden`); alt="" (decorative) keeps its value, by default.
  nonBooleanAttributes: [],
  allowedSchemes: ['data'],
  allowedSchemesByTag: {},
  allowProtocolRelative: false,
  parseStyleAttributes: false,
  selfClosing: ['img', 'br', 'hr', 'wbr', 'col', 'meta'],
  transformTags: { '*': withoutActiveAttributes },
  exclusiveFilter: (frame) => frame.tag === 'style' && (frame.text.includes('<') || scriptInCss(frame.text)),
};

export function stripActiveContent(html: string): string {
  const cleaned = sanitizeHtml(html, POLICY);
  return DOCTYPE.test(html) ? `<!DOCTYPE html>${cleaned}` : cleaned;
}
