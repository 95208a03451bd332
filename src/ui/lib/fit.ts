// The figures are laid out for FIGURE_SIZE (src/core/figures/theme.ts). A workbench panel is
// narrower: there, legends become one scrolling line and a long subtitle is cut with an ellipsis
// (its facts are in the panel's numbers), so nothing overlaps the plot. Nothing else is changed.

type Loose = Record<string, unknown>;

const asList = (value: unknown): Loose[] => (Array.isArray(value) ? value : value ? [value] : []) as Loose[];

export function fitOption(option: unknown, width: number, designWidth: number): unknown {
  if (!option || typeof option !== 'object' || !(width > 0) || width >= designWidth) return option;
  const o = { ...(option as Loose) };
  if (o.legend) {
    // narrower than the panel: room at the right for a figure's visual map (a colour scale)
    const legends = asList(o.legend).map((l) => ({ ...l, type: 'scroll', width: Math.max(120, Math.round(width * 0.66)), left: 'center' }));
    o.legend = Array.isArray(o.legend) ? legends : legends[0];
  }
  if (o.title) {
    const titles = asList(o.title).map((t) => ({
      ...t,
      subtextStyle: { ...((t.subtextStyle as Loose) ?? {}), width: Math.max(120, width - 48), overflow: 'truncate' },
    }));
    o.title = Array.isArray(o.title) ? titles : titles[0];
  }
  return o;
}
