// The figures' fonts measured once, ahead of the first figure that needs them. The first text
// measured in a font size and weight makes the browser resolve the family's fallbacks, and ECharts
// measures a CJK glyph for each font's line height: measured in Debian's headless Chromium, 10–16 ms
// for the page's first font, up to 19 ms for the first bold one and 1–3 ms for each further size,
// spent inside the first draw of a figure (a 50,000-rollout Monte Carlo result's survival figure
// spent about 10 ms of its 50 ms frame there). The browser keeps what it resolved for the whole
// page, whichever canvas measures, so measuring here in idle moments, one font at a time, takes
// that out of the frames that draw a result.

import { FONT_FAMILY, TYPE } from '../../core/figures/theme.js';
import { whenIdle } from './yield.js';

/** Every size the figures set (theme.ts TYPE, the 11 px letters of the two-leg and lateral figures, ECharts' default 12 px), plain and bold. */
export function figureFonts(): string[] {
  const sizes = [...new Set([11, 12, ...Object.values(TYPE)])].sort((a, b) => a - b);
  return sizes.flatMap((size) => [`${size}px ${FONT_FAMILY}`, `bold ${size}px ${FONT_FAMILY}`]);
}

let started = false;

/** Measure each of figureFonts() in an idle moment of its own, once per page. */
export function warmFigureFonts(): void {
  if (started || typeof document === 'undefined') return;
  started = true;
  const context = document.createElement('canvas').getContext('2d');
  if (!context) return;
  const fonts = figureFonts();
  const measure = (i: number) => {
    if (i >= fonts.length) return;
    whenIdle(() => {
      context.font = fonts[i];
      context.measureText('国M0');
      measure(i + 1);
    }, 2000);
  };
  measure(0);
}
