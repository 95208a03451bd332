// Plain-text presentation helpers for the terminal: numbers, aligned tables, wrapped paragraphs.
// No colour: the output must read the same in a pipe, a log file and a terminal.

// A number with a fixed count of decimals; '-' for a missing or NaN value, 'inf' for ±Infinity.
export function fixed(value: number | null | undefined, decimals: number): string {
  if (value === null || value === undefined || Number.isNaN(value)) return '-';
  if (!Number.isFinite(value)) return value > 0 ? 'inf' : '-inf';
  const text = value.toFixed(decimals);
  return /^-0\.?0*$/.test(text) ? text.slice(1) : text; // no "-0.000"
}

// A number as a person would write it in a sentence: up to 6 significant digits, no trailing zeros.
export function plain(value: number): string {
  if (!Number.isFinite(value)) return String(value);
  return String(Number(value.toPrecision(6)));
}

export interface Column {
  title: string;
  unit: string; // second header line; '' when unitless
  align?: 'left' | 'right'; // default right (numbers)
}

// A table with a two-line header (title, unit) and columns padded to their widest cell.
// `rows` may contain a string instead of cells: it is printed as-is across the table (e.g. a note
// where rows were left out).
export function table(columns: readonly Column[], rows: readonly (readonly string[] | string)[], indent = ''): string {
  const widths = columns.map((column, i) =>
    Math.max(
      column.title.length,
      column.unit.length,
      ...rows.map((row) => (typeof row === 'string' ? 0 : (row[i] ?? '').length)),
    ),
  );
  const line = (cells: readonly string[]) =>
    indent +
    cells
      .map((cell, i) => (columns[i].align === 'left' ? cell.padEnd(widths[i]) : cell.padStart(widths[i])))
      .join('  ')
      .trimEnd();
  const header = [line(columns.map((column) => column.title)), line(columns.map((column) => column.unit))];
  const rule = indent + widths.map((width) => '-'.repeat(width)).join('  ');
  const body = rows.map((row) => (typeof row === 'string' ? indent + row : line(row)));
  return [...header, rule, ...body].join('\n');
}

// Label/value lines with the values aligned: "  body     9 kg, ...".
export function fields(rows: readonly (readonly [string, string])[], indent = '  '): string {
  const width = Math.max(...rows.map(([label]) => label.length));
  return rows.map(([label, value]) => `${indent}${label.padEnd(width)}  ${value}`).join('\n');
}

// Greedy word wrap to `width` columns; `firstPrefix` starts the first line, `prefix` the rest.
export function wrap(text: string, width: number, firstPrefix = '', prefix = ''): string {
  const lines: string[] = [];
  let current = firstPrefix;
  let empty = true;
  for (const word of text.split(/\s+/).filter(Boolean)) {
    if (!empty && current.length + 1 + word.length > width) {
      lines.push(current);
      current = prefix + word;
    } else {
      current += (empty ? '' : ' ') + word;
    }
    empty = false;
  }
  lines.push(current);
  return lines.join('\n');
}

// "1 stride", "3 strides".
export function count(n: number, noun: string, plural = `${noun}s`): string {
  return `${n} ${n === 1 ? noun : plural}`;
}

/**
 * A header field stating what an apex accuracy gave (a result's `integrator` object), or none
 * without one: the tolerances used and, when the run calibrated them, the error it measured.
 */
export function accuracyFields(report: { apex_accuracy_m: number; relative_tolerance: number; absolute_tolerance: number; calibrated_apex_error_m?: number; calibration_strides?: number } | undefined): [string, string][] {
  if (!report) return [];
  const sig = (x: number) => String(Number(x.toPrecision(2)));
  const calibrated =
    report.calibrated_apex_error_m === undefined
      ? ''
      : `; calibrated on ${report.calibration_strides} strides, largest one-stride error ${sig(report.calibrated_apex_error_m)} m`;
  return [['accuracy', `apex ${sig(report.apex_accuracy_m)} m asked: rtol ${sig(report.relative_tolerance)}, atol ${sig(report.absolute_tolerance)} m${calibrated}`]];
}
