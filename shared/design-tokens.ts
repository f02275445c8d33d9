/**
 * Liftwise's palette, defined once. tailwind.config.ts and the chart theme (src/lib/chart-theme.ts)
 * both read these, so a colour means the same thing on every map, table and chart:
 * teal = ascent / wetter / cloudier, amber = descent / drier / sunnier.
 */
export const palette = {
  slate: {
    50: '#F6F8FA',
    100: '#EDF1F5',
    200: '#DCE3EA',
    300: '#C3CDD8',
    400: '#94A3B4',
    500: '#687889',
    600: '#4D5B6B',
    700: '#38434F',
    800: '#242C35',
    850: '#1B2229',
    900: '#131920',
    950: '#0C1116',
  },
  ascent: { strong: '#0E7C7B', mid: '#5FB3B0', soft: '#BFE3E0' },
  descent: { strong: '#C8791A', mid: '#E8B26A', soft: '#F6DDB5' },
  action: { DEFAULT: '#2E5BFF', hover: '#1F47E0', soft: '#DCE4FF' },
  caution: { DEFAULT: '#B42318', soft: '#FBE4E2' },
} as const;

/** Diverging scale from strongest descent to strongest ascent, neutral in the middle (for omega maps and change columns). */
export const divergingScale = [
  palette.descent.strong,
  palette.descent.mid,
  palette.descent.soft,
  '#F4F6F8',
  palette.ascent.soft,
  palette.ascent.mid,
  palette.ascent.strong,
] as const;

export const fonts = {
  sans: ['"Inter Variable"', 'Inter', 'system-ui', 'sans-serif'],
  mono: ['"IBM Plex Mono"', 'ui-monospace', 'monospace'],
} as const;
