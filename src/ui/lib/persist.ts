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

export async function saveResult(name: string, value: unknown): Promise<boolean> {
  const database = await db();
  if (!database) return false;
  return new Promise((resolve) => {
    try {
      const tx = database.transaction(STORE, 'readwrite');
      if (value === undefined) tx.objectStore(STORE).delete(name);
      else tx.objectStore(STORE).put(value, name);
      tx.oncomplete = () => resolve(true);
      tx.onerror = () => resolve(false);
      tx.onabort = () => resolve(false);
    } catch {
      resolve(false);
    }
  });
}

export async function loadResults(): Promise<Record<string, unknown>> {
  const database = await db();
  if (!database) return {};
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
