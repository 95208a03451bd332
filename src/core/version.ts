// Pronk's version and content hashes, for provenance in every written result.
import pkg from '../../package.json' with { type: 'json' };

export const PRONK_VERSION: string = pkg.version;

/** JSON with object keys sorted at every level: the same value always gives the same text. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(value, (_key, v) =>
    v && typeof v === 'object' && !Array.isArray(v)
      ? Object.fromEntries(Object.keys(v).sort().map((k) => [k, (v as Record<string, unknown>)[k]]))
      : v,
  );
}

/** SHA-256 (hex) of the canonical JSON of a value; Web Crypto, so Node and browsers agree. */
export async function contentHash(value: unknown): Promise<string> {
  const bytes = new TextEncoder().encode(canonicalJson(value));
  const digest = await globalThis.crypto.subtle.digest('SHA-256', bytes);
  return Array.from(new Uint8Array(digest), (b) => b.toString(16).padStart(2, '0')).join('');
}
