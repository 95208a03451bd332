// Element ids of draft fields: the validator's path of a field gives its id, so a reported issue
// can take the user to the field it names.

export function fieldId(scope: string, path: string): string {
  return `${scope}-${path.replace(/[^A-Za-z0-9_]+/g, '-').replace(/-+$/, '')}`;
}

/**
 * Focuses the field at `path` (or the nearest field whose path starts with it: a table column,
 * an axis), opening the sections around it. Returns false when no such field is on screen.
 */
export function focusField(scope: string, path: string): boolean {
  const id = fieldId(scope, path);
  let element = document.getElementById(id) as HTMLElement | null;
  if (!element) element = document.querySelector<HTMLElement>(`[id^="${id}-"]:is(input, select, button)`);
  if (!element) return false;
  for (let node: HTMLElement | null = element; node; node = node.parentElement) {
    if (node instanceof HTMLDetailsElement) node.open = true;
  }
  element.scrollIntoView({ block: 'center' });
  element.focus();
  return true;
}
