// Numbers as the views show them: significant digits, not fixed decimals; a dash for nothing.

export function sig(x: number | null | undefined, digits = 4): string {
  if (x === null || x === undefined) return '—';
  if (!Number.isFinite(x)) return String(x);
  if (x === 0) return '0';
  const a = Math.abs(x);
  if (a >= 1e6 || a < 1e-4) return x.toExponential(Math.max(0, digits - 1)).replace('e+', 'e');
  return String(Number(x.toPrecision(digits)));
}

export function percent(x: number | null | undefined, digits = 1): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  return `${(100 * x).toFixed(digits)} %`;
}

export function mm(x: number | null | undefined): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  return `${(1000 * x).toFixed(0)} mm`;
}

export function clock(at: number): string {
  return new Date(at).toLocaleTimeString([], { hour: '2-digit', minute: '2-digit', second: '2-digit' });
}

export function seconds(s: number): string {
  if (!Number.isFinite(s)) return '—';
  return s < 1 ? `${Math.round(s * 1000)} ms` : `${s.toFixed(s < 10 ? 2 : 1)} s`;
}

export function plural(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? '' : 's'}`;
}
