// The fonts the workbench measures ahead of the first figure (src/ui/lib/font-warmup.ts) cover
// every font size the figure builders set: a figure that starts using another size would pay the
// browser's first measurement of it (up to about 19 ms in Chromium) inside its first frame.
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { FONT_FAMILY, TYPE } from '../../src/core/figures/theme.js';
import { figureFonts } from '../../src/ui/lib/font-warmup.js';

const FIGURES = join(import.meta.dirname, '../../src/core/figures');

/** The font sizes written in the figure builders: what an object's `fontSize:` property is set to (a number, a TYPE member, or anything else, which fails the test). */
function sizesInFigures(): { size: number; where: string }[] {
  const found: { size: number; where: string }[] = [];
  for (const file of readdirSync(FIGURES).filter((f) => f.endsWith('.ts'))) {
    const text = readFileSync(join(FIGURES, file), 'utf8');
    for (const m of text.matchAll(/fontSize:\s*([\w.]+)(?=\s*[,}\n])/g)) {
      const v = m[1];
      const size = /^\d/.test(v) ? Number(v) : v.startsWith('TYPE.') ? TYPE[v.slice(5) as keyof typeof TYPE] : Number.NaN;
      found.push({ size, where: `${file}: fontSize: ${v}` });
    }
  }
  return found;
}

describe('figure fonts measured ahead of the first figure', () => {
  it('include every size the figure builders set, plain and bold, in the figures font family', () => {
    const fonts = new Set(figureFonts());
    const sizes = sizesInFigures();
    expect(sizes.length).toBeGreaterThan(10); // the scan finds the builders' sizes
    for (const { size, where } of sizes) {
      expect(Number.isFinite(size), `${where}: a size the scan cannot read`).toBe(true);
      expect(fonts.has(`${size}px ${FONT_FAMILY}`), where).toBe(true);
      expect(fonts.has(`bold ${size}px ${FONT_FAMILY}`), where).toBe(true);
    }
    // ECharts' own default size (tooltips, labels without a size)
    expect(fonts.has(`12px ${FONT_FAMILY}`)).toBe(true);
  });
});
