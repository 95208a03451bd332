export interface CaseResult {
  name: string;
  outputs: Record<string, string>;
}
export function maskTimings(text: string): string;
export function runCases(options?: { only?: string[] }): CaseResult[];
export const GOLDEN_DIR: string;
export function goldenPath(name: string, label: string): string;
