// Autosave. The drafts (scenario, study, view settings) go to localStorage on every edit: small,
// synchronous, so a reload or a crash right after a keystroke keeps it. Results (maps, scans,
// optimizations) go to IndexedDB, which holds large structured values.

const DRAFT_KEY = 'pronk.workbench.drafts.v1';
const HISTORY_KEY = 'pronk.workbench.history.v1';
const DB_NAME = 'pronk-workbench';
const STORE = 'results';

export function loadDrafts<T>(): T | null {
  try {
    const text = globalThis.localStorage?.getItem(DRAFT_KEY);
    return text ? (JSON.parse(text) as T) : null;
  } catch {
    return null;
  }
}

/** Returns false when the browser refused (private mode, quota): the caller says so. */
export function saveDrafts(value: unknown): boolean {
  try {
    globalThis.localStorage?.setItem(DRAFT_KEY, JSON.stringify(value));
    return true;
  } catch {
    return false;
  }
}

export function clearDrafts(): void {
  try {
    globalThis.localStorage?.removeItem(DRAFT_KEY);
    globalThis.localStorage?.removeItem(HISTORY_KEY);
  } catch {
    // nothing to clear
  }
}

export function loadHistory<T>(): T | null {
  try {
    const text = globalThis.localStorage?.getItem(HISTORY_KEY);
    return text ? (JSON.parse(text) as T) : null;
  } catch {
    return null;
  }
}

/**
 * Saves the undo history; when the browser's storage is full, the oldest steps go first (the
 * drafts themselves are saved separately and always win).
 */
export function saveHistory(history: { past: unknown[]; future: unknown[] }): boolean {
  let { past, future } = history;
  for (;;) {
    try {
      globalThis.localStorage?.setItem(HISTORY_KEY, JSON.stringify({ past, future }));
      return true;
    } catch {
      if (past.length + future.length <= 1) return false;
      past = past.slice(Math.ceil(past.length / 2));
      future = future.slice(Math.ceil(future.length / 2));
    }
  }
}

let dbPromise: Promise<IDBDatabase | null> | undefined;

function db(): Promise<IDBDatabase | null> {
  dbPromise ??= new Promise((resolve) => {
    if (typeof indexedDB === 'undefined') return resolve(null);
    const request = indexedDB.open(DB_NAME, 1);
    request.onupgradeneeded = () => request.result.createObjectStore(STORE);
    request.onsuccess = () => resolve(request.result);
    request.onerror = () => resolve(null);
    request.onblocked = () => resolve(null);
  });
  return dbPromise;
}

// A big result (a 121 x 121 basin's cells, 50,000 Monte Carlo rows) took IndexedDB's structured
// serialization 0.2-0.3 s in one main-thread task. Its long arrays are stored instead as JSON text
// in slices, each made in its own task with a yield between, and read back the same way. Each
// slice is a Blob where there are Blobs: IndexedDB's serialization then copies a handle, not the
// text (slices as strings were all copied in the one task of the put: 47 ms of a 98 ms task for
// 50,000 Monte Carlo rows, headless Chromium 150). Slices stored as strings are still read. Non-finite numbers survive as {"$pronkNumber": "NaN"}; an
// array that holds anything JSON cannot carry (a typed array, a function) is stored as it is.

/** Arrays at least this long are stored as JSON slices. */
export const SLICE_AT = 2000;
/** Elements per slice: a few milliseconds of JSON each. */
const SLICE = 1000;
/** How deep into a result the long arrays are looked for (stamp → value → cells / rows). */
const DEPTH = 4;
const SLICES = '$pronkSlices';
const NUMBER = '$pronkNumber';

const pause = () => new Promise<void>((resolve) => setTimeout(resolve, 0));

class NotJson extends Error {}

function replacer(_key: string, value: unknown): unknown {
  if (typeof value === 'number' && !Number.isFinite(value)) return { [NUMBER]: String(value) };
  if (typeof value === 'function' || typeof value === 'bigint' || ArrayBuffer.isView(value) || value instanceof ArrayBuffer) throw new NotJson();
  return value;
}

function reviver(_key: string, value: unknown): unknown {
  if (value !== null && typeof value === 'object' && !Array.isArray(value)) {
    const n = (value as Record<string, unknown>)[NUMBER];
    if (typeof n === 'string' && Object.keys(value).length === 1) return Number(n);
  }
  return value;
}

const isPlainObject = (v: unknown): v is Record<string, unknown> =>
  v !== null && typeof v === 'object' && (Object.getPrototypeOf(v) === Object.prototype || Object.getPrototypeOf(v) === null);

/** The value with its long arrays as JSON slices (a copy: the value itself is not changed). */
export async function packForStorage(value: unknown, depth = DEPTH): Promise<unknown> {
  if (Array.isArray(value) && value.length >= SLICE_AT) {
    const slices: (string | Blob)[] = [];
    try {
      for (let at = 0; at < value.length; at += SLICE) {
        const text = JSON.stringify(value.slice(at, at + SLICE), replacer);
        slices.push(typeof Blob === 'undefined' ? text : new Blob([text], { type: 'application/json' }));
        await pause();
      }
      return { [SLICES]: slices, length: value.length };
    } catch (error) {
      if (!(error instanceof NotJson)) throw error;
      return value;
    }
  }
  if (depth <= 0 || !isPlainObject(value)) return value;
  const out: Record<string, unknown> = {};
  for (const [key, v] of Object.entries(value)) out[key] = await packForStorage(v, depth - 1);
  return out;
}

/** The inverse of packForStorage, a slice per task. */
export async function unpackFromStorage(value: unknown, depth = DEPTH): Promise<unknown> {
  if (!isPlainObject(value)) return value;
  const slices = value[SLICES];
  if (Array.isArray(slices) && typeof value.length === 'number') {
    const out: unknown[] = [];
    for (const slice of slices as (string | Blob)[]) {
      const text = typeof slice === 'string' ? slice : await slice.text();
      for (const item of JSON.parse(text, reviver) as unknown[]) out.push(item);
      await pause();
    }
    return out;
  }
  if (depth <= 0) return value;
  const out: Record<string, unknown> = {};
  for (const [key, v] of Object.entries(value)) out[key] = await unpackFromStorage(v, depth - 1);
  return out;
}

// The latest save of each name wins, even when an earlier one is still slicing.
const saving = new Map<string, number>();
let saves = 0;

/** Stores a result under `name` (undefined deletes it); resolves false when the browser refused or a later save replaced it. */
export async function saveResult(name: string, value: unknown): Promise<boolean> {
  const ticket = ++saves;
  saving.set(name, ticket);
  const stored = value === undefined ? undefined : await packForStorage(value);
  if (saving.get(name) !== ticket) return false;
  const database = await db();
  if (!database) return false;
  if (saving.get(name) !== ticket) return false;
  return new Promise((resolve) => {
    try {
      const tx = database.transaction(STORE, 'readwrite');
      if (stored === undefined) tx.objectStore(STORE).delete(name);
      else tx.objectStore(STORE).put(stored, name);
      tx.oncomplete = () => resolve(true);
      tx.onerror = () => resolve(false);
      tx.onabort = () => resolve(false);
    } catch {
      resolve(false);
    }
  });
}

export async function loadResults(): Promise<Record<string, unknown>> {
  const stored = await loadStored();
  const out: Record<string, unknown> = {};
  for (const [name, value] of Object.entries(stored)) out[name] = await unpackFromStorage(value);
  return out;
}

function loadStored(): Promise<Record<string, unknown>> {
  return db().then((database) => (database ? readAll(database) : {}));
}

function readAll(database: IDBDatabase): Promise<Record<string, unknown>> {
  return new Promise((resolve) => {
    try {
      const out: Record<string, unknown> = {};
      const tx = database.transaction(STORE, 'readonly');
      const request = tx.objectStore(STORE).openCursor();
      request.onsuccess = () => {
        const cursor = request.result;
        if (cursor) {
          out[String(cursor.key)] = cursor.value;
          cursor.continue();
        } else resolve(out);
      };
      request.onerror = () => resolve(out);
    } catch {
      resolve({});
    }
  });
}

export async function clearResults(): Promise<void> {
  const database = await db();
  if (!database) return;
  await new Promise<void>((resolve) => {
    const tx = database.transaction(STORE, 'readwrite');
    tx.objectStore(STORE).clear();
    tx.oncomplete = () => resolve();
    tx.onerror = () => resolve();
  });
}
