// JSON text in pieces, exactly as `JSON.stringify(value, null, 2)` writes it, for outputs too large
// for one string: V8 caps a string at about 2^29 characters (512 MiB of JSON), and a simulate run
// of the documented 1 000 000 strides writes about 1 GB. Large arrays are split between their
// elements; everything else is serialized by JSON.stringify itself, re-indented to its depth (JSON
// strings hold no raw line breaks, so a line break in its output is always indentation).

const INDENT = '  ';
/** Arrays longer than this are written element by element; shorter ones in one piece. */
const SPLIT_ARRAY_LENGTH = 256;
/** The size pieces are gathered to before they are handed out (characters). */
const PIECE_CHARS = 1 << 16;

/** The pieces of `JSON.stringify(value, null, 2)`, in order; joined, they are that text exactly. */
export function* jsonChunks(value: unknown): Generator<string> {
  const tail = yield* emit(applyToJson(value, ''), '');
  if (tail) yield tail;
}

function applyToJson(value: unknown, key: string): unknown {
  if (value !== null && typeof value === 'object' && typeof (value as { toJSON?: unknown }).toJSON === 'function') {
    return (value as { toJSON: (key: string) => unknown }).toJSON(key);
  }
  return value;
}

// What JSON.stringify leaves out of an object (and writes as null in an array).
function omitted(value: unknown): boolean {
  return value === undefined || typeof value === 'function' || typeof value === 'symbol';
}

// A value in one piece, indented for the depth `current`.
function whole(value: unknown, current: string): string {
  const text = JSON.stringify(value, null, 2);
  return current === '' ? text : text.replace(/\n/g, `\n${current}`);
}

// Splitting is worth it only where a large array lies below.
function holdsLargeArray(value: unknown): boolean {
  if (Array.isArray(value)) return value.length > SPLIT_ARRAY_LENGTH || value.some(holdsLargeArray);
  if (value === null || typeof value !== 'object') return false;
  for (const key of Object.keys(value)) if (holdsLargeArray((value as Record<string, unknown>)[key])) return true;
  return false;
}

// `value` with toJSON applied; `head` the text so far. Yields full pieces and returns the
// unfinished tail, which the caller continues.
function* emit(value: unknown, current: string, head = ''): Generator<string, string> {
  let out = head;
  if (value === null || typeof value !== 'object' || !holdsLargeArray(value)) return out + whole(value, current);
  const inner = current + INDENT;
  if (Array.isArray(value)) {
    // holdsLargeArray: never empty here
    out += '[\n';
    for (let i = 0; i < value.length; i++) {
      const element = applyToJson(value[i], String(i));
      out += inner;
      out = omitted(element) ? `${out}null` : yield* emit(element, inner, out);
      out += i < value.length - 1 ? ',\n' : '\n';
      if (out.length >= PIECE_CHARS) {
        yield out;
        out = '';
      }
    }
    return `${out}${current}]`;
  }
  const record = value as Record<string, unknown>;
  const entries = Object.keys(record)
    .map((name) => [name, applyToJson(record[name], name)] as const)
    .filter(([, entry]) => !omitted(entry));
  if (entries.length === 0) return `${out}{}`;
  out += '{\n';
  for (let i = 0; i < entries.length; i++) {
    const [name, entry] = entries[i];
    out += `${inner}${JSON.stringify(name)}: `;
    out = yield* emit(entry, inner, out);
    out += i < entries.length - 1 ? ',\n' : '\n';
    if (out.length >= PIECE_CHARS) {
      yield out;
      out = '';
    }
  }
  return `${out}${current}}`;
}
