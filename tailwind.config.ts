import type { Config } from 'tailwindcss';

/**
 * Rateledger's own palette: ledger green for the frame, paper for the page, ink for text and a
 * brick red kept for alerts. Loaded from src/styles.css with `@config`.
 */
export default {
  content: ['./server/**/*.hbs', './src/**/*.{ts,tsx}'],
  theme: {
    extend: {
      colors: {
        ledger: { DEFAULT: '#1d4b45', dark: '#143631', light: '#e3eeeb' },
        paper: '#f6f4ee',
        ink: { DEFAULT: '#1f2428', muted: '#5a6169' },
        rule: '#d8d4c8',
        alert: '#9b2c1f',
      },
      fontFamily: {
        serif: ['Merriweather', 'Georgia', 'serif'],
        sans: ['"Source Sans 3"', 'system-ui', 'sans-serif'],
      },
    },
  },
} satisfies Config;
