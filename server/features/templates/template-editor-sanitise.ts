/**
 * Removes everything that could act from a rendered template preview, so the HTML the editor
 * shows carries no script at all — even when an admin's template holds literal `<script>` or
 * `onload=` markup (Handlebars escapes values, not the template's own markup).
 *
 * It is one layer of three: the preview also sits in an `<iframe sandbox>` without
 * `allow-scripts`, and under the editor page's policy `script-src 'self'`, so nothing inline
 * could run even if this missed something.
 *
 * How: a single pass over the markup, tag by tag, following the HTML tokenizer's rules for
 * where a tag, a quoted attribute value and a comment end (WHATWG HTML, "13.2.5 Tokenization").
 * - Elements that run or load code are removed: `script` (with its content), and the tags of
 *   `iframe`, `frame`, `frameset`, `object`, `embed`, `applet`, `portal`, `base`, `link`,
 *   `meta` with `http-equiv`, and SVG `set`/`animate*` (they can rewrite a link to `javascript:`).
 * - Attributes: event handlers (`on…`), `srcdoc`, and URL attributes whose value is anything but
 *   a fragment (`#…`) or an inline image (`data:image/…`) are dropped; malformed attribute names
 *   are dropped.
 * - Comments, processing instructions and CDATA are dropped; the doctype is kept.
 * The pass repeats until nothing changes (a removal cannot join two halves into a new tag).
 *
 * Throws nothing. Example: stripActiveContent('<p onclick="x()">a</p><script>x()</script>') is
 * '<p>a</p>'.
 */

const REMOVED_TAGS = new Set([
  'script',
  'iframe',
  'frame',
  'frameset',
  'object',
  'embed',
  'applet',
  'portal',
  'base',
  'link',
  'set',
  'animate',
  'animatemotion',
  'animatetransform',
]);
const URL_ATTRIBUTES = new Set([
  'href',
  'src',
  'xlink:href',
  'action',
  'formaction',
  'poster',
  'background',
  'data',
  'srcset',
  'ping',
  'lowsrc',
  'dynsrc',
  'codebase',
  'cite',
  'longdesc',
  'manifest',
]);
const SAFE_URL = /^(#|data:image\/(png|jpeg|gif|webp);)/i;
const TAG_NAME = /^[a-zA-Z][a-zA-Z0-9:-]{0,63}(?=[\s/>]|$)/;
const ATTRIBUTE_NAME = /^[a-zA-Z_:][-a-zA-Z0-9_:.]*$/;
const MAX_PASSES = 5;

interface Attribute {
  name: string;
  value: string | null;
}

/** Reads a tag's attributes from `at` to its closing `>`; returns them and the index after `>`. */
function readAttributes(html: string, at: number): { attributes: Attribute[]; end: number } {
  const attributes: Attribute[] = [];
  let index = at;
  const length = html.length;
  while (index < length) {
    while (index < length && /[\s/]/.test(html[index] as string)) index += 1;
    if (index >= length) break;
    if (html[index] === '>') return { attributes, end: index + 1 };
    let nameEnd = index + 1;
    while (nameEnd < length && !/[\s/>=]/.test(html[nameEnd] as string)) nameEnd += 1;
    const name = html.slice(index, nameEnd);
    index = nameEnd;
    while (index < length && /\s/.test(html[index] as string)) index += 1;
    let value: string | null = null;
    if (html[index] === '=') {
      index += 1;
      while (index < length && /\s/.test(html[index] as string)) index += 1;
      const quote = html[index];
      if (quote === '"' || quote === "'") {
        const close = html.indexOf(quote, index + 1);
        const stop = close === -1 ? length : close;
        value = html.slice(index + 1, stop);
        index = stop + 1;
      } else {
        let valueEnd = index;
        while (valueEnd < length && !/[\s>]/.test(html[valueEnd] as string)) valueEnd += 1;
        value = html.slice(index, valueEnd);
        index = valueEnd;
      }
    }
    attributes.push({ name, value });
  }
  return { attributes, end: length };
}

function keepAttribute(tag: string, attribute: Attribute): boolean {
  const name = attribute.name.toLowerCase();
  if (!ATTRIBUTE_NAME.test(attribute.name)) return false;
  if (name.startsWith('on') || name === 'srcdoc') return false;
  if (tag === 'meta' && name === 'http-equiv') return false;
  if (URL_ATTRIBUTES.has(name)) return SAFE_URL.test((attribute.value ?? '').trim());
  return true;
}

const escapeAttribute = (value: string) =>
  value.replace(/&(?![#a-zA-Z0-9]+;)/g, '&amp;').replace(/"/g, '&quot;');

function onePass(html: string): string {
  const out: string[] = [];
  let index = 0;
  const length = html.length;
  while (index < length) {
    const open = html.indexOf('<', index);
    if (open === -1) {
      out.push(html.slice(index));
      break;
    }
    out.push(html.slice(index, open));
    const next = html[open + 1] ?? '';
    if (html.startsWith('<!--', open)) {
      // An abruptly closed comment (<!--> or <!--->) ends at once; otherwise at --> or --!>.
      if (html.startsWith('<!-->', open)) index = open + 5;
      else if (html.startsWith('<!--->', open)) index = open + 6;
      else {
        const ends = [html.indexOf('-->', open + 4), html.indexOf('--!>', open + 4)].filter(
          (at) => at !== -1,
        );
        index =
          ends.length === 0
            ? length
            : Math.min(...ends) + (html.startsWith('--!>', Math.min(...ends)) ? 4 : 3);
      }
      continue;
    }
    if (next === '!' || next === '?') {
      const close = html.indexOf('>', open);
      const end = close === -1 ? length : close + 1;
      if (/^<!doctype\s/i.test(html.slice(open, open + 10))) out.push(html.slice(open, end));
      index = end;
      continue;
    }
    const closing = next === '/';
    const nameStart = open + (closing ? 2 : 1);
    const nameMatch = TAG_NAME.exec(html.slice(nameStart, nameStart + 65));
    if (!nameMatch) {
      out.push('&lt;');
      index = open + 1;
      continue;
    }
    const tag = nameMatch[0].toLowerCase();
    const { attributes, end } = readAttributes(html, nameStart + nameMatch[0].length);
    index = end;
    if (
      REMOVED_TAGS.has(tag) ||
      (tag === 'meta' && attributes.some((a) => a.name.toLowerCase() === 'http-equiv'))
    ) {
      if (tag === 'script' && !closing) {
        const stop = html.toLowerCase().indexOf('</script', end);
        if (stop === -1) index = length;
        else {
          const close = html.indexOf('>', stop);
          index = close === -1 ? length : close + 1;
        }
      }
      continue;
    }
    if (closing) {
      out.push(`</${nameMatch[0]}>`);
      continue;
    }
    const kept = attributes
      .filter((attribute) => keepAttribute(tag, attribute))
      .map((attribute) =>
        attribute.value === null
          ? ` ${attribute.name}`
          : ` ${attribute.name}="${escapeAttribute(attribute.value)}"`,
      );
    const selfClosing = html[end - 2] === '/' ? '/' : '';
    out.push(`<${nameMatch[0]}${kept.join('')}${selfClosing}>`);
  }
  return out.join('');
}

export function stripActiveContent(html: string): string {
  let current = html;
  for (let pass = 0; pass < MAX_PASSES; pass += 1) {
    const next = onePass(current);
    if (next === current) return next;
    current = next;
  }
  // Still changing after several passes: hostile input; return only the text, escaped.
  return current.replace(/</g, '&lt;');
}
