// nlopt-js decodes its embedded WASM with `window.atob` when it finds no Node `Buffer`; a worker
// has `atob` but no `window`. Import this before nlopt-js is loaded.
const scope = globalThis as unknown as { window?: unknown; atob: (data: string) => string };
if (scope.window === undefined) scope.window = { atob: scope.atob.bind(globalThis) };

export {};
