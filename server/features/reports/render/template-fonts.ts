import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';

/**
 * The report's fonts as `@font-face` rules whose sources are `data:` URLs, built from the woff2
 * files bundled in `@fontsource/merriweather` and `@fontsource/source-sans-3` — the same files
 * the web app serves. Chromium prints with network access blocked, so a font the page does not
 * carry inline would silently fall back to whatever the machine has; inlined, every PDF embeds
 * the same glyphs wherever it is rendered.
 *
 * Only the weights and subsets the default template uses are included (Latin and Latin
 * Extended; Greek for Source Sans 3), each with its `unicode-range`, so Chromium decodes a file
 * only when the text needs it. Glyphs outside these ranges (e.g. superscript digits ⁴–⁹) fall
 * back to a system font, which Chromium also embeds.
 *
 * Reference: CSS Fonts Module Level 4, §4 "Font Resource" (W3C); RFC 2397 (data: URLs).
 *
 * Throws when a bundled font file is missing (a broken install), naming the file.
 *
 * Example: fontFaceCss() begins "@font-face{font-family:'Merriweather';font-style:normal;font-weight:400;".
 */

interface FaceSpec {
  family: 'Merriweather' | 'Source Sans 3';
  packageName: string;
  filePrefix: string;
  weight: number;
  style: 'normal' | 'italic';
  subsets: readonly string[];
}

const require = createRequire(import.meta.url);

const MERRIWEATHER = {
  family: 'Merriweather',
  packageName: '@fontsource/merriweather',
  filePrefix: 'merriweather',
} as const;
const SOURCE_SANS = {
  family: 'Source Sans 3',
  packageName: '@fontsource/source-sans-3',
  filePrefix: 'source-sans-3',
} as const;
const LATIN = ['latin', 'latin-ext'] as const;

export const REPORT_FONT_FACES: readonly FaceSpec[] = [
  { ...MERRIWEATHER, weight: 400, style: 'normal', subsets: LATIN },
  { ...MERRIWEATHER, weight: 700, style: 'normal', subsets: LATIN },
  { ...SOURCE_SANS, weight: 400, style: 'normal', subsets: [...LATIN, 'greek'] },
  { ...SOURCE_SANS, weight: 400, style: 'italic', subsets: LATIN },
  { ...SOURCE_SANS, weight: 600, style: 'normal', subsets: [...LATIN, 'greek'] },
  { ...SOURCE_SANS, weight: 700, style: 'normal', subsets: LATIN },
];

function unicodeRanges(packageName: string): Record<string, string> {
  const file = require.resolve(`${packageName}/unicode.json`);
  return JSON.parse(readFileSync(file, 'utf8')) as Record<string, string>;
}

function faceRule(face: FaceSpec, subset: string, range: string): string {
  const fileName = `${face.filePrefix}-${subset}-${face.weight}-${face.style}.woff2`;
  let bytes: Buffer;
  try {
    bytes = readFileSync(require.resolve(path.posix.join(face.packageName, 'files', fileName)));
  } catch (error) {
    throw new Error(
      `The bundled report font ${face.packageName}/files/${fileName} is missing; reinstall dependencies.`,
      {
        cause: error,
      },
    );
  }
  return (
    `@font-face{font-family:'${face.family}';font-style:${face.style};font-weight:${face.weight};` +
    `font-display:block;src:url(data:font/woff2;base64,${bytes.toString('base64')}) format('woff2');` +
    `unicode-range:${range};}`
  );
}

let cached: string | null = null;

/** All report @font-face rules as one CSS string, read once per process. */
export function fontFaceCss(): string {
  if (cached !== null) return cached;
  const rules: string[] = [];
  for (const face of REPORT_FONT_FACES) {
    const ranges = unicodeRanges(face.packageName);
    for (const subset of face.subsets) {
      const range = ranges[subset];
      if (range === undefined) throw new Error(`${face.packageName} has no "${subset}" subset.`);
      rules.push(faceRule(face, subset, range));
    }
  }
  cached = rules.join('\n');
  return cached;
}
