// comlink ships its Node adapter without a .d.mts beside the .mjs.
declare module 'comlink/dist/esm/node-adapter.mjs' {
  import type { Endpoint } from 'comlink';
  export default function nodeEndpoint(nep: {
    postMessage(message: unknown, transfer?: unknown[]): void;
    on(type: string, listener: (...args: unknown[]) => void): void;
    off(type: string, listener: (...args: unknown[]) => void): void;
  }): Endpoint;
}
