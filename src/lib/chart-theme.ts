/**
 * The charts' colours, read from the same design tokens as Tailwind (shared/design-tokens.ts):
 * teal = ascent / wetter / cloudier, amber = descent / drier / sunnier, slate for the frame.
 */
import { useEffect, useState } from 'react';
import { divergingScale, fonts, palette } from '@shared/design-tokens.ts';

/** Omega colours from most negative (strong ascent, teal) to most positive (strong descent, amber). */
export const omegaColors: readonly string[] = [...divergingScale].reverse();

/**
 * The same meaning on a dark surface: the neutral middle is a dark slate, so "no vertical motion"
 * recedes into the page and light coastlines stay readable, and stronger motion gets brighter
 * (teal for ascent at the negative end, amber for descent at the positive end).
 */
export const omegaColorsDark: readonly string[] = [
  palette.ascent.soft,
  palette.ascent.mid,
  palette.ascent.strong,
  palette.slate[800],
  palette.descent.strong,
  palette.descent.mid,
  palette.descent.soft,
];

export function omegaColorsFor(dark: boolean): readonly string[] {
  return dark ? omegaColorsDark : omegaColors;
}

export const seriesColors = {
  qg: palette.ascent.strong,
  model: palette.slate[500],
  ratio: palette.descent.strong,
  primary: palette.action.DEFAULT,
  caution: palette.caution.DEFAULT,
} as const;

/** A "nice" rounded-up magnitude (1, 1.5, 2, 2.5, 3, 4, 5, 6 or 8 times a power of ten) for symmetric scales. */
export function niceCeil(value: number): number {
  if (!(value > 0) || !Number.isFinite(value)) return 1;
  const power = 10 ** Math.floor(Math.log10(value));
  const n = value / power;
  const step = [1, 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10].find((s) => n <= s + 1e-12) ?? 10;
  return Number((step * power).toPrecision(12));
}

/** A colour range symmetric around zero, so white is always "no vertical motion". */
export function symmetricRange(values: readonly (number | null)[]): { min: number; max: number } {
  let absMax = 0;
  for (const v of values) if (v !== null && Number.isFinite(v)) absMax = Math.max(absMax, Math.abs(v));
  const m = niceCeil(absMax || 0.1);
  return { min: -m, max: m };
}

export interface ChartFrame {
  text: string;
  muted: string;
  line: string;
  background: string;
  tooltipBg: string;
  coast: string;
  fontSans: string;
  fontMono: string;
}

/** Frame colours (axes, text, grid lines, coastlines) for light and dark. */
export function chartFrame(dark: boolean): ChartFrame {
  return {
    text: dark ? palette.slate[100] : palette.slate[800],
    muted: dark ? palette.slate[400] : palette.slate[500],
    line: dark ? palette.slate[700] : palette.slate[200],
    background: 'transparent',
    tooltipBg: dark ? palette.slate[850] : '#FFFFFF',
    coast: dark ? palette.slate[300] : palette.slate[700],
    fontSans: fonts.sans.join(', '),
    fontMono: fonts.mono.join(', '),
  };
}

/** Axis styling shared by every chart. */
export function axisStyle(frame: ChartFrame) {
  return {
    axisLine: { lineStyle: { color: frame.muted } },
    axisTick: { lineStyle: { color: frame.muted } },
    axisLabel: { color: frame.muted, fontFamily: frame.fontMono, fontSize: 10 },
    splitLine: { lineStyle: { color: frame.line } },
    nameTextStyle: { color: frame.muted, fontFamily: frame.fontSans, fontSize: 11 },
  };
}

export function tooltipStyle(frame: ChartFrame) {
  return {
    backgroundColor: frame.tooltipBg,
    borderColor: frame.line,
    textStyle: { color: frame.text, fontFamily: frame.fontMono, fontSize: 11 },
  };
}

/** Follows the `dark` class the theme toggle puts on <html>. */
export function useDarkMode(): boolean {
  const read = () => typeof document !== 'undefined' && document.documentElement.classList.contains('dark');
  const [dark, setDark] = useState(read);
  useEffect(() => {
    if (typeof MutationObserver === 'undefined') return;
    const observer = new MutationObserver(() => setDark(read()));
    observer.observe(document.documentElement, { attributes: true, attributeFilter: ['class'] });
    return () => observer.disconnect();
  }, []);
  return dark;
}
