import type { Config } from 'tailwindcss';

/**
 * Where Tailwind looks for class names: the React islands and the server's Handlebars views (each
 * feature keeps its views beside its routes). Loaded from src/styles.css with `@config`. The
 * palette and fonts are `@theme` tokens in src/styles.css, not here (Tailwind v4's CSS-first
 * configuration), so they are written once and reach CSS variables too.
 */
export default {
  content: ['./server/**/*.hbs', './src/**/*.{ts,tsx}'],
} satisfies Config;
