import type { Config } from 'tailwindcss';
import { fonts, palette } from './shared/design-tokens.ts';

/**
 * Surfaces and text use CSS variables (src/styles/index.css) so that light and dark themes
 * swap them in one place; the meaning colours (ascent, descent, action, caution) are fixed.
 */
export default {
  content: ['./index.html', './src/**/*.{ts,tsx}'],
  darkMode: 'class',
  theme: {
    extend: {
      colors: {
        slate: palette.slate,
        ascent: palette.ascent,
        descent: palette.descent,
        action: palette.action,
        caution: palette.caution,
        surface: {
          DEFAULT: 'var(--lw-surface)',
          raised: 'var(--lw-surface-raised)',
          sunken: 'var(--lw-surface-sunken)',
        },
        line: 'var(--lw-line)',
        ink: { DEFAULT: 'var(--lw-ink)', muted: 'var(--lw-ink-muted)', faint: 'var(--lw-ink-faint)' },
      },
      fontFamily: { sans: [...fonts.sans], mono: [...fonts.mono] },
      fontSize: { '2xs': ['0.6875rem', { lineHeight: '1rem' }] },
    },
  },
} satisfies Config;
