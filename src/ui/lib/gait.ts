// The gait a two-leg stride showed, as the workbench writes it: a word and a glyph (never colour
// alone), and "changed" where a stride's gait differs from the one before it (the start's gait
// for stride 0).

import type { BipedStride } from '../../core/models/biped-simulate.js';

export type GaitWord = 'walking' | 'running' | 'hopping' | 'changed';

export const GAIT_GLYPHS: Record<GaitWord, string> = {
  walking: '▬', // always a foot on the ground
  running: '⌒', // a flight phase
  hopping: '◇', // both legs together
  changed: '⚠',
};

export interface GaitCell {
  word: GaitWord;
  /** The text shown: "walking", or "changed: walking → running". */
  text: string;
  glyph: string;
}

export function strideGaits(strides: readonly BipedStride[], startGait: 'walking' | 'running'): GaitCell[] {
  let before: string = startGait;
  return strides.map((s) => {
    const changed = s.gait !== before;
    const cell: GaitCell = changed
      ? { word: 'changed', text: `changed: ${before} → ${s.gait}`, glyph: GAIT_GLYPHS.changed }
      : { word: s.gait, text: s.gait, glyph: GAIT_GLYPHS[s.gait] };
    before = s.gait;
    return cell;
  });
}
