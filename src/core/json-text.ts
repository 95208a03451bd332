// JSON text as Pronk reads it: JSON.parse behind a nesting bound, with a syntax error reported as
// an InputError at its line and column. Environment-neutral; used for every file Pronk reads.

import { InputError } from './errors.js';

// JSON.parse, with a syntax error reported as an InputError at its line and column.
export function parseJson(text: string, source?: string): unknown {
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text; // a UTF-8 byte order mark
  const deep = tooDeep(body);
  if (deep !== null) {
    throw new InputError(
      [
        {
          path: '',
          expected: `JSON nested at most ${MAX_JSON_DEPTH} levels deep`,
          found: 'deeper nesting',
          message: `invalid input at line ${lineColumn(body, deep)}: more than ${MAX_JSON_DEPTH} levels of nested [ and { (Pronk's files nest fewer than 10)`,
        },
      ],
      { source },
    );
  }
  try {
    return JSON.parse(body);
  } catch (error) {
    const located = locateJsonSyntaxError(body);
    const where = located ? ` at line ${lineColumn(body, located.offset)}` : '';
    const reason = located ? located.reason : error instanceof Error ? error.message.split('\n')[0] : String(error);
    throw new InputError(
      [{ path: '', expected: 'valid JSON', found: 'invalid JSON', message: `invalid JSON${where}: ${reason}` }],
      { source },
    );
  }
}

/**
 * The deepest nesting of arrays and objects a JSON input may have. Pronk's own files nest fewer
 * than 10 levels; V8 spends about 55 bytes on each open bracket it parses (50 MB of "[" took
 * 2.8 GB), so deeper input is refused by a linear scan before JSON.parse sees it.
 */
export const MAX_JSON_DEPTH = 64;

// The offset of the bracket that opens level MAX_JSON_DEPTH + 1 (brackets inside strings do not
// count), or null when the text nests no deeper than that.
function tooDeep(text: string): number | null {
  let depth = 0;
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const code = text.charCodeAt(i);
    if (inString) {
      if (code === 0x5c) i++; // the escaped character
      else if (code === 0x22) inString = false;
    } else if (code === 0x22) inString = true;
    else if (code === 0x5b || code === 0x7b) {
      if (++depth > MAX_JSON_DEPTH) return i;
    } else if (code === 0x5d || code === 0x7d) depth--;
  }
  return null;
}

function lineColumn(text: string, offset: number): string {
  let line = 1;
  let lineStart = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      lineStart = i + 1;
    }
  }
  return `${line}, column ${offset - lineStart + 1}`;
}

// Finds the first syntax error in a JSON text (RFC 8259 grammar), since V8's messages do not
// always give a position. Returns null when the text is valid.
export function locateJsonSyntaxError(text: string): { offset: number; reason: string } | null {
  let at = 0;
  class Stop {
    constructor(readonly offset: number, readonly reason: string) {}
  }
  const fail = (reason: string, offset = at): never => {
    throw new Stop(offset, reason);
  };
  const show = (offset: number) =>
    offset >= text.length ? 'end of input' : JSON.stringify(String.fromCodePoint(text.codePointAt(offset)!));
  const skipSpace = () => {
    while (at < text.length && ' \t\n\r'.includes(text[at])) at++;
  };
  const literal = (word: string) => {
    for (let i = 0; i < word.length; i++) {
      if (text[at + i] !== word[i]) fail(`unexpected ${show(at + i)} (expected ${word})`, at + i);
    }
    at += word.length;
  };
  const string = () => {
    at++; // opening quote
    for (;;) {
      if (at >= text.length) fail('unterminated string');
      const code = text.charCodeAt(at);
      if (code === 0x22) {
        at++;
        return;
      }
      if (code < 0x20) fail('control character in string (escape it, e.g. \\n)');
      if (code === 0x5c) {
        const escaped = text[at + 1];
        if (escaped === 'u') {
          if (!/^[0-9a-fA-F]{4}$/.test(text.slice(at + 2, at + 6))) fail('bad \\u escape in string');
          at += 6;
        } else if (escaped !== undefined && '"\\/bfnrt'.includes(escaped)) at += 2;
        else fail(`bad escape \\${escaped ?? ''} in string`);
      } else at++;
    }
  };
  const number = () => {
    const pattern = /-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?/y;
    pattern.lastIndex = at;
    const match = pattern.exec(text);
    if (!match) fail(`unexpected ${show(at)} (expected a number)`);
    at += match![0].length;
  };
  const value = (depth: number): void => {
    if (depth > 10_000) fail('nested too deeply');
    skipSpace();
    const c = text[at];
    if (c === '{') {
      at++;
      skipSpace();
      if (text[at] === '}') {
        at++;
        return;
      }
      for (;;) {
        skipSpace();
        if (text[at] !== '"') fail(`unexpected ${show(at)} (expected a double-quoted field name)`);
        string();
        skipSpace();
        if (text[at] !== ':') fail(`unexpected ${show(at)} (expected ':')`);
        at++;
        value(depth + 1);
        skipSpace();
        if (text[at] === ',') {
          at++;
          skipSpace();
          if (text[at] === '}') fail(`trailing comma before "}" (JSON allows none)`);
          continue;
        }
        if (text[at] === '}') {
          at++;
          return;
        }
        fail(`unexpected ${show(at)} (expected ',' or '}')`);
      }
    }
    if (c === '[') {
      at++;
      skipSpace();
      if (text[at] === ']') {
        at++;
        return;
      }
      for (;;) {
        value(depth + 1);
        skipSpace();
        if (text[at] === ',') {
          at++;
          skipSpace();
          if (text[at] === ']') fail(`trailing comma before "]" (JSON allows none)`);
          continue;
        }
        if (text[at] === ']') {
          at++;
          return;
        }
        fail(`unexpected ${show(at)} (expected ',' or ']')`);
      }
    }
    if (c === '"') return string();
    if (c === 't') return literal('true');
    if (c === 'f') return literal('false');
    if (c === 'n') return literal('null');
    if (c === '-' || (c >= '0' && c <= '9')) return number();
    fail(at >= text.length ? 'unexpected end of input (expected a value)' : `unexpected ${show(at)} (expected a value)`);
  };
  try {
    value(0);
    skipSpace();
    if (at < text.length) fail(`unexpected ${show(at)} after the end of the JSON value`);
    return null;
  } catch (error) {
    if (error instanceof Stop) return { offset: error.offset, reason: error.reason };
    return null; // e.g. a stack overflow on absurd nesting: fall back to V8's message
  }
}
