/** A piece of a message body: plain text, or text that links to `href`. */
export interface TextSegment {
  text: string;
  href?: string;
}

const URL_PATTERN = /https?:\/\/[^\s<>"'`]+/gi;
/** Punctuation that ends a sentence rather than the address ("see https://x/a."). */
const TRAILING_PUNCTUATION = /[.,;:!?)\]}]+$/;

/**
 * Splits a plain-text body into segments so that a page can show it escaped, with only the links
 * to the app itself clickable: an http(s) address counts when it has the origin of `baseUrl`, lies
 * under its path and carries no user name or password. Any other address stays text — a message
 * in the outbox must not become a way to send an admin to somewhere else.
 *
 * Example: `linkSegments('Open https://app.test/reports/7.', 'https://app.test')` →
 * `[{ text: 'Open ' }, { text: 'https://app.test/reports/7', href: 'https://app.test/reports/7' }, { text: '.' }]`.
 */
export function linkSegments(text: string, baseUrl: string): TextSegment[] {
  const base = new URL(baseUrl);
  const basePath = base.pathname.replace(/\/+$/, '');
  const isOwn = (candidate: string): string | null => {
    let url: URL;
    try {
      url = new URL(candidate);
    } catch {
      return null;
    }
    if (url.origin !== base.origin || url.username || url.password) return null;
    if (basePath && url.pathname !== basePath && !url.pathname.startsWith(`${basePath}/`)) return null;
    return url.href;
  };

  const segments: TextSegment[] = [];
  const pushText = (value: string) => {
    if (!value) return;
    const last = segments.at(-1);
    if (last && last.href === undefined) last.text += value;
    else segments.push({ text: value });
  };
  let position = 0;
  for (const match of text.matchAll(URL_PATTERN)) {
    const start = match.index;
    const address = match[0].replace(TRAILING_PUNCTUATION, '');
    pushText(text.slice(position, start));
    const href = isOwn(address);
    if (href) segments.push({ text: address, href });
    else pushText(address);
    position = start + address.length;
  }
  pushText(text.slice(position));
  return segments;
}
