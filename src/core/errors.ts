// Errors that reach the user: bad input (a scenario, a file, an option value) and bad usage.
// Both map to exit code 2 in the CLI; anything else is an internal error (exit 1).

// One problem with the input: where it is, what was expected there (with the unit) and what was
// found. `message` replaces the "expected ..., found ..." sentence when that reads badly, e.g.
// "unknown field (did you mean mass_kg?)".
export interface InputIssue {
  path: string; // dotted field path, array indices as [i]; '' for the whole input
  expected: string;
  found: string;
  message?: string;
}

// Bad input, with every issue found (not just the first).
export class InputError extends Error {
  readonly issues: InputIssue[];
  readonly source: string | undefined; // the file (or option) the input came from, if any

  constructor(issues: InputIssue[], options: { source?: string } = {}) {
    super(formatIssues(issues, options.source));
    this.name = 'InputError';
    this.issues = issues;
    this.source = options.source;
  }

  // One line per issue: `demo.json: body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found -9`.
  format(source: string | undefined = this.source): string {
    return formatIssues(this.issues, source);
  }
}

// Bad command-line usage (unknown command or option, missing option value). The message is the
// whole line shown to the user.
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

export function formatIssues(issues: readonly InputIssue[], source?: string): string {
  return issues.map((issue) => formatIssue(issue, source)).join('\n');
}

function formatIssue(issue: InputIssue, source?: string): string {
  const where = [source, issue.path].filter((part) => part !== undefined && part !== '').join(': ');
  const what = issue.message ?? `expected ${issue.expected}, found ${issue.found}`;
  return where === '' ? what : `${where}: ${what}`;
}

// The "found" part of a message: `missing` for an absent value, numbers as numbers (so JSON's
// 1e999, which JSON.parse turns into Infinity, shows as `Infinity`), everything else as compact
// JSON cut to a readable length.
export function describeFound(value: unknown): string {
  if (value === undefined) return 'missing';
  const text = compactJson(value, 0);
  return text.length <= MAX_FOUND_CHARS ? text : `${text.slice(0, MAX_FOUND_CHARS - 3)}...`;
}

const MAX_FOUND_CHARS = 72;

// Like JSON.stringify without spaces, but keeps non-finite numbers visible instead of `null`.
function compactJson(value: unknown, depth: number): string {
  if (typeof value === 'number') return Object.is(value, -0) ? '0' : String(value);
  if (typeof value === 'string') return JSON.stringify(value);
  if (value === null || typeof value === 'boolean') return String(value);
  if (typeof value === 'bigint') return `${value}n`;
  if (value === undefined || typeof value === 'function' || typeof value === 'symbol') return typeof value;
  if (depth > 3) return Array.isArray(value) ? '[...]' : '{...}';
  if (Array.isArray(value)) {
    const shown = value.slice(0, 20).map((item) => compactJson(item, depth + 1));
    if (value.length > 20) shown.push('...');
    return `[${shown.join(',')}]`;
  }
  const entries = Object.entries(value as Record<string, unknown>);
  const shown = entries.slice(0, 12).map(([key, item]) => `${JSON.stringify(key)}:${compactJson(item, depth + 1)}`);
  if (entries.length > 12) shown.push('...');
  return `{${shown.join(',')}}`;
}

// A field path in the dotted form used in messages: body.mass_kg, policy.angle.attack_deg[2].
export function formatPath(segments: readonly PropertyKey[]): string {
  let path = '';
  for (const segment of segments) {
    if (typeof segment === 'number') path += `[${segment}]`;
    else if (typeof segment === 'string' && /^[A-Za-z_$][\w$]*$/.test(segment)) path += path === '' ? segment : `.${segment}`;
    else path += `[${JSON.stringify(String(segment))}]`;
  }
  return path;
}

// The known name closest to a misspelt one, or undefined when none is plausibly meant:
// an edit distance of at most a third of the name (and at least 2), or the name with its unit
// suffix left off (`mass` for `mass_kg`).
export function closestName(name: string, known: readonly string[]): string | undefined {
  const wanted = name.toLowerCase();
  let best: string | undefined;
  let bestDistance = Infinity;
  for (const candidate of known) {
    const lower = candidate.toLowerCase();
    const distance = lower.startsWith(`${wanted}_`) ? 1 : editDistance(wanted, lower);
    if (distance < bestDistance) {
      best = candidate;
      bestDistance = distance;
    }
  }
  const allowed = Math.max(2, Math.floor(wanted.length / 3));
  return bestDistance <= allowed ? best : undefined;
}

// Optimal string alignment distance (Levenshtein plus adjacent transpositions).
function editDistance(a: string, b: string): number {
  const rows = a.length + 1;
  const cols = b.length + 1;
  const d: number[] = new Array(rows * cols).fill(0); // (rows × cols), d[i*cols+j] = distance of a[0,i) to b[0,j)
  for (let i = 0; i < rows; i++) d[i * cols] = i;
  for (let j = 0; j < cols; j++) d[j] = j;
  for (let i = 1; i < rows; i++) {
    for (let j = 1; j < cols; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      let best = Math.min(d[(i - 1) * cols + j] + 1, d[i * cols + j - 1] + 1, d[(i - 1) * cols + j - 1] + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) best = Math.min(best, d[(i - 2) * cols + j - 2] + 1);
      d[i * cols + j] = best;
    }
  }
  return d[rows * cols - 1];
}
