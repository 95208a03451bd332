// Types of scripts/build.mjs, for the test that imports it.
export interface BuildStep {
  what: string;
  inputs: string[];
  outputs: string[];
  run(): boolean;
}
export declare const STEPS: Record<'wasm' | 'ts' | 'ui', BuildStep>;
export declare function staleSteps(root: string, asked?: string[]): string[];
export declare function inputHash(root: string, step: BuildStep): string;
