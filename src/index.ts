// Pronk as a library: `import { simulate, returnMap, basin, robustness, optimize, exportPolicy }
// from 'pronk'` (two-leg scenarios: simulateBiped, bipedReturnMap; basin and robustness take both). The same analyses as the `pronk` command, on the same validators: every function
// takes a scenario or study as plain JSON (an object read from a file, or built in code), checks
// it, and returns the plain data that `pronk <command> --json` prints (format, format_version,
// model and section first; src/core/json-output.ts). Bad input throws an
// InputError whose `issues` name each field, what was expected and what was found.
//
// Node only for basin, robustness and optimize (worker threads); simulate, returnMap and
// exportPolicy run wherever the WASM kernel loads.

import { described, modelHeader, type Described } from './core/json-output.js';
import { requireKind } from './core/models/kind.js';
import type { BipedScenario } from './core/models/biped.js';
import type { BipedSimulationResult } from './core/models/biped-simulate.js';
import type { BipedMapOptions, BipedMapResult } from './core/analysis/biped-map.js';
import { parseScenario } from './core/scenario.js';
import type { SimulateOptions, SimulationResult } from './core/simulate.js';
import type { ReturnMapOptions, ReturnMapResult } from './core/analysis/return-map.js';
import type { BasinOptions, BasinResult, BasinRunControl } from './core/analysis/basin.js';
import type { RobustnessExecution, RobustnessOptions, RobustnessResult } from './core/analysis/robustness.js';
import { parseStudy } from './core/optimize/study.js';
import type { OptimizationResult } from './core/optimize/search.js';
import type { NodeSearchOptions } from './worker/node-optimize.js';
import type { ExportOptions, PolicyExport } from './core/export/build.js';

export { InputError, type InputIssue } from './core/errors.js';
export { SAFETY_CAUTION } from './core/safety.js';
export { PRONK_VERSION } from './core/version.js';
export { demoScenario, parseScenario, readScenarioFile, type Scenario } from './core/scenario.js';
export { parseStudy, readStudyFile, type Study } from './core/optimize/study.js';
export { jsonSchema, JSON_SCHEMA_NAMES, type JsonSchemaName } from './core/json-schemas.js';
export type { Described, JsonHeader } from './core/json-output.js';
export type { SimulateOptions, SimulationResult } from './core/simulate.js';
export type { BipedSimulationResult } from './core/models/biped-simulate.js';
export type { BipedMapOptions, BipedMapResult } from './core/analysis/biped-map.js';
export type { ReturnMapOptions, ReturnMapResult } from './core/analysis/return-map.js';
export type { BasinOptions, BasinResult, BasinRunControl } from './core/analysis/basin.js';
export type { RobustnessExecution, RobustnessOptions, RobustnessResult } from './core/analysis/robustness.js';
export type { OptimizationResult, SearchOptions, SearchProgress, SearchPhase } from './core/optimize/search.js';
export type { NodeSearchOptions } from './worker/node-optimize.js';
export type { ExportOptions, PolicyExport } from './core/export/build.js';

/** One rollout of a single-leg scenario, stride by stride (`pronk simulate --json`); two legs: simulateBiped. */
export async function simulate(scenario: unknown, options: SimulateOptions = {}): Promise<Described<SimulationResult>> {
  const checked = parseScenario(scenario);
  requireKind(checked, 'simulate (two-leg scenarios: simulateBiped)', ['slip']);
  const { simulate: run } = await import('./core/simulate.js');
  return described('simulate', await run(checked, options));
}

/** One rollout of a two-leg scenario ("model": "biped"), stride by stride (`pronk simulate --json`). */
export async function simulateBiped(scenario: unknown, options: SimulateOptions = {}): Promise<Described<BipedSimulationResult>> {
  const checked = parseScenario(scenario);
  requireKind(checked, 'simulateBiped', ['biped']);
  const { simulateBiped: run } = await import('./core/models/biped-simulate.js');
  return described('simulate', await run(checked as BipedScenario, options), modelHeader(checked));
}

/** The apex return map at the scenario's energy: fixed points, slopes, eigenvalues (`pronk map --json`); two legs: bipedReturnMap. */
export async function returnMap(scenario: unknown, options: ReturnMapOptions = {}): Promise<Described<ReturnMapResult>> {
  const checked = parseScenario(scenario);
  requireKind(checked, 'returnMap (two-leg scenarios: bipedReturnMap)', ['slip']);
  const { apexReturnMap } = await import('./core/analysis/return-map.js');
  return described('map', await apexReturnMap(checked, options));
}

/** A two-leg scenario's section map: every fixed point with all eigenvalues (`pronk map --json`). */
export async function bipedReturnMap(scenario: unknown, options: BipedMapOptions = {}): Promise<Described<BipedMapResult>> {
  const checked = parseScenario(scenario);
  requireKind(checked, 'bipedReturnMap', ['biped']);
  const { bipedReturnMap: run } = await import('./core/analysis/biped-map.js');
  return described('map', await run(checked as BipedScenario, options), modelHeader(checked));
}

/** The basin of attraction on flat ground (`pronk basin --json`); `workers` threads, all cores by default. */
export async function basin(scenario: unknown, options: BasinOptions & BasinRunControl = {}): Promise<Described<BasinResult>> {
  const checked = parseScenario(scenario);
  const { workers, onProgress, signal, runBatch, ...grid } = options;
  const { basinOfAttraction } = await import('./core/analysis/basin.js');
  return described('basin', await basinOfAttraction(checked, grid, { workers, onProgress, signal, runBatch }), modelHeader(checked));
}

/** Monte Carlo survival on random terrain with Wilson intervals (`pronk robustness --json`). */
export async function robustness(scenario: unknown, options: RobustnessOptions & RobustnessExecution): Promise<Described<RobustnessResult>> {
  const checked = parseScenario(scenario);
  const { workers, onProgress, signal, runBatch, ...terms } = options;
  const { terrainRobustness } = await import('./core/analysis/robustness.js');
  return described('robustness', await terrainRobustness(checked, terms, { workers, onProgress, signal, runBatch }), modelHeader(checked));
}

/**
 * A study's policy search (`pronk optimize`): the result file's content. A study object needs an
 * inline `scenario`; for a study file with `scenario_file`, pass `await readStudyFile(path)` (a
 * validated study validates again as it is).
 */
export async function optimize(study: unknown, options: NodeSearchOptions = {}): Promise<OptimizationResult> {
  const checked = parseStudy(study);
  const { optimizeStudy } = await import('./worker/node-optimize.js');
  return optimizeStudy(checked, options);
}

export interface ExportPolicyOptions extends Omit<ExportOptions, 'names'> {
  format: 'c' | 'json' | 'csv';
  /** C only: the prefix of every identifier (default: from the scenario's name). */
  prefix?: string;
  /** C only: the header's file name, which the source includes (default PREFIX_policy.h). */
  headerName?: string;
}

export interface ExportedFiles {
  /** File name (C: the header and the source beside it) and text, with the safety caution in each. */
  files: { name: string; text: string }[];
  /** The tables, their grid and the interpolation errors found (what `pronk export` reports). */
  export: PolicyExport;
}

/**
 * A policy as firmware tables (`pronk export`), from a scenario or a result file's content
 * (`pronk optimize --out`, `pronk deadbeat --out`). Returns the files' text; writing them is the
 * caller's. A number firmware must not run (non-finite, outside its physical range, flushed to
 * zero or subnormal once rounded to float32) throws an InputError naming it, `force` or not; a
 * negative constraint margin throws unless `force` is set.
 */
export async function exportPolicy(source: unknown, options: ExportPolicyOptions): Promise<ExportedFiles> {
  const input = await import('./core/export/input.js');
  const label = 'exportPolicy(source)';
  const from = input.looksLikeResult(source) ? await input.parseResult(source, label) : await input.scenarioSource(source, label);
  const { format, prefix: givenPrefix, headerName, ...exportOptions } = options;
  const { buildExport } = await import('./core/export/build.js');
  const exported = buildExport(from, exportOptions);
  if (format === 'c') {
    const { checkPrefix, defaultPrefix, writeC } = await import('./core/export/c99.js');
    const prefix = givenPrefix === undefined ? defaultPrefix(from.scenario.name) : checkPrefix(givenPrefix);
    const header = headerName ?? `${prefix}_policy.h`;
    const c = writeC(exported, prefix, header);
    return { files: [{ name: header, text: c.header }, { name: `${header.replace(/\.h$/, '')}.c`, text: c.source }], export: exported };
  }
  if (format === 'json') {
    const { writeJson } = await import('./core/export/json.js');
    return { files: [{ name: 'policy.json', text: writeJson(exported) }], export: exported };
  }
  if (format === 'csv') {
    const { writeCsv } = await import('./core/export/csv.js');
    return { files: [{ name: 'policy.csv', text: writeCsv(exported) }], export: exported };
  }
  const { InputError } = await import('./core/errors.js');
  throw new InputError([{ path: 'format', expected: 'one of c, json, csv', found: JSON.stringify(format) }], { source: label });
}
