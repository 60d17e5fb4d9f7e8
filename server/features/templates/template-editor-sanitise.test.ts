// @vitest-environment jsdom
import { describe, expect, it } from 'vitest';
import { stripActiveContent } from './template-editor-sanitise.ts';

/**
 * The preview sanitiser against well-known script-injection vectors (OWASP "XSS Filter Evasion
 * Cheat Sheet", owasp.org/www-community/xss-filter-evasion-cheatsheet, and the HTML
 * tokenizer's comment rules, WHATWG HTML §13.2.5). Each output is parsed by an independent HTML
 * parser (jsdom's DOMParser, which implements the WHATWG parsing algorithm) and checked for anything that could
 * act: script-like elements, event-handler attributes, and script URLs after entity decoding.
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

const ACTIVE_ELEMENTS =
  'script, iframe, frame, frameset, object, embed, applet, base, link, meta[http-equiv], set, animate';
// Browsers strip leading spaces and C0 control characters from a URL before reading its scheme.
const SCRIPT_URL = /^\s*(javascript|vbscript|data:(?!image\/))/i;
const withoutControls = (value: string) =>
  [...value].filter((character) => character.charCodeAt(0) > 0x1f).join('');

function activeParts(html: string): string[] {
  const document = new DOMParser().parseFromString(html, 'text/html');
  const found: string[] = [];
  for (const element of document.querySelectorAll(ACTIVE_ELEMENTS))
    found.push(`element ${element.localName}`);
  for (const element of document.querySelectorAll('*')) {
    for (const attribute of element.attributes) {
      const value = withoutControls(attribute.value);
      if (attribute.name.toLowerCase().startsWith('on')) found.push(`attribute ${attribute.name}`);
      if (attribute.name === 'srcdoc' || SCRIPT_URL.test(value))
        found.push(`${attribute.name}="${attribute.value}"`);
    }
  }
  return found;
}

describe('stripActiveContent', () => {
  it.each(VECTORS)('leaves nothing that can act in %s', (vector) => {
    const cleaned = stripActiveContent(`<p>before</p>${vector}<p>after</p>`);
    expect(activeParts(cleaned)).toEqual([]);
    expect(cleaned).not.toMatch(/<script/i);
    expect(cleaned).toContain('<p>before</p>');
  });

  it('the vectors are live before cleaning (the check can fail)', () => {
    const live = VECTORS.filter((vector) => activeParts(`<p>before</p>${vector}`).length > 0);
    expect(live.length).toBeGreaterThan(VECTORS.length * 0.7);
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
    expect(stripActiveContent(markup)).toBe(markup);
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
