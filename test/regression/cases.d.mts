export interface RegressionCase {
  name: string;
  args: string[];
  files?: string[];
}
export const SCENARIOS: Record<string, unknown>;
export const CASES: RegressionCase[];
export const TIMING_FIELDS: string[];
