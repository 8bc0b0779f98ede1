import type { Config } from 'tailwindcss';

/**
 * Tailwind 4 reads its design tokens from the `@theme` block in app/globals.css — that is the one place the palette
 * and fonts are defined. This file (loaded by `@config` in globals.css) only names where class names are written,
 * so classes kept in lib/ (e.g. severity colours chosen in code) are generated too.
 */
export default {
  content: ['./app/**/*.{ts,tsx}', './components/**/*.{ts,tsx}', './lib/**/*.{ts,tsx}'],
} satisfies Config;
