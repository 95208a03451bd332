// Project files: what the workbench saves and opens. A scenario file and a study file are exactly
// what the `pronk` command reads (a study saved here carries its scenario inline); a result file is
// what `pronk optimize` writes and `pronk export` reads; a project file holds all of them.

import { InputError, describeFound, type InputIssue } from '../../core/errors.js';
import { parseStudy } from '../../core/optimize/study.js';
import { parseJson, parseScenario } from '../../core/scenario.js';
import { parseLateralScenario } from '../../core/models/lateral.js';

export const PROJECT_FORMAT = 'pronk-project';
export const PROJECT_FORMAT_VERSION = 1;
const RESULT_FORMAT = 'pronk-result';

export interface ProjectFile {
  format: typeof PROJECT_FORMAT;
  format_version: number;
  saved: string;
  scenario: unknown;
  /** The study without its scenario (the project's scenario is the study's base). */
  study: unknown;
  settings: unknown;
  optimization: unknown | null;
}

export type OpenedFile =
  | { kind: 'scenario'; scenario: Record<string, unknown> }
  | { kind: 'study'; study: Record<string, unknown>; scenario: Record<string, unknown> | null; scenarioFile: string | null }
  | { kind: 'result'; result: Record<string, unknown> }
  | { kind: 'project'; project: ProjectFile };

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

/** Fields only a study has (src/core/optimize/study.ts). */
const STUDY_FIELDS = ['free_parameters', 'objective', 'search', 'holdout', 'constraints', 'model_mismatch', 'scenario_file'];
/** At most this many of a refused file's problems are listed. */
const LISTED = 6;

function refuse(name: string, what: string, issues: readonly InputIssue[]): never {
  const listed = issues.slice(0, LISTED);
  const more = issues.length > LISTED ? [{ path: '', expected: '', found: '', message: `and ${issues.length - LISTED} more` }] : [];
  throw new InputError(
    [{ path: '', expected: '', found: '', message: `not opened: ${what}; the editors are unchanged` }, ...listed, ...more],
    { source: name },
  );
}

/** A JSON Schema reference ("$schema") names the format for editors; the workbench does not keep it. */
function withoutSchema(value: Record<string, unknown>): Record<string, unknown> {
  const { $schema: _schema, ...rest } = value;
  return rest;
}

/**
 * What an opened file is, by what it says it is: a `format` field for result and project files,
 * the study or scenario schema otherwise (checked in full: a study against its own scenario, or
 * the scenario in the editor when it names a scenario file). Anything else is refused with the
 * reasons (an InputError naming the file), and nothing is changed.
 */
export function classifyFile(text: string, name: string, context: { scenario: unknown }): OpenedFile {
  const parsed = parseJson(text, name);
  if (!isObject(parsed)) {
    refuse(name, 'it is not a scenario, a study, a pronk result or a workbench project', [
      { path: '', expected: 'a JSON object', found: describeFound(parsed) },
    ]);
  }
  const value = withoutSchema(parsed);
  if ('format' in value) {
    if (value.format === PROJECT_FORMAT) {
      const version = value.format_version;
      if (typeof version !== 'number' || !Number.isInteger(version) || version < 1 || version > PROJECT_FORMAT_VERSION) {
        refuse(name, 'a workbench project of a version this workbench does not read', [
          { path: 'format_version', expected: `an integer from 1 to ${PROJECT_FORMAT_VERSION}`, found: describeFound(version) },
        ]);
      }
      const issues: InputIssue[] = [];
      for (const key of ['scenario', 'study'] as const) {
        if (!isObject(value[key])) issues.push({ path: key, expected: 'an object (the draft being edited)', found: describeFound(value[key]) });
      }
      if (value.settings !== undefined && !isObject(value.settings)) issues.push({ path: 'settings', expected: 'an object', found: describeFound(value.settings) });
      if (value.optimization != null && !isObject(value.optimization)) issues.push({ path: 'optimization', expected: 'an object or null', found: describeFound(value.optimization) });
      if (issues.length) refuse(name, 'a damaged workbench project', issues);
      return { kind: 'project', project: value as unknown as ProjectFile };
    }
    if (value.format === RESULT_FORMAT) {
      if (value.kind !== 'optimization') {
        refuse(name, `a ${String(value.kind ?? 'pronk')} result: the workbench opens optimization results (export others with \`pronk export\`)`, [
          { path: 'kind', expected: '"optimization"', found: describeFound(value.kind) },
        ]);
      }
      const issues: InputIssue[] = [];
      try {
        parseScenario(value.scenario);
      } catch (error) {
        if (!(error instanceof InputError)) throw error;
        issues.push(...error.issues.map((i) => ({ ...i, path: i.path ? `scenario.${i.path}` : 'scenario' })));
      }
      const params = value.parameters;
      if (!Array.isArray(params) || !params.every((p) => isObject(p) && typeof p.path === 'string' && typeof p.start === 'number' && typeof p.value === 'number')) {
        issues.push({ path: 'parameters', expected: 'an array of {path, start, value, ...}', found: describeFound(params) });
      }
      if (issues.length) refuse(name, 'a damaged optimization result', issues);
      return { kind: 'result', result: value };
    }
    refuse(name, `a ${describeFound(value.format)} file, which the workbench does not open`, [
      { path: 'format', expected: `"${PROJECT_FORMAT}" or "${RESULT_FORMAT}" (or no format: a scenario or a study)`, found: describeFound(value.format) },
    ]);
  }
  if (STUDY_FIELDS.some((f) => f in value)) {
    const { scenario, scenario_file, ...study } = value;
    const inline = isObject(scenario) ? withoutSchema(scenario) : null;
    const scenarioFile = typeof scenario_file === 'string' ? scenario_file : null;
    try {
      parseStudy({ ...study, scenario: inline ?? context.scenario });
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      // the inline scenario's own problems are the study's too; the editor's scenario's are not
      const own = inline ? error.issues : error.issues.filter((i) => !(i.path === 'scenario' || i.path.startsWith('scenario.')));
      if (own.length) {
        refuse(
          name,
          inline
            ? 'it is not a study Pronk can run'
            : `it is not a study Pronk can run on the scenario in the editor${scenarioFile ? ` (it names the scenario file ${scenarioFile}, which a browser cannot read: open that scenario first)` : ''}`,
          own,
        );
      }
    }
    return { kind: 'study', study, scenario: inline, scenarioFile };
  }
  try {
    // every model kind: the lateral one has its own validator (models/lateral.ts)
    if (value.model === 'lateral') parseLateralScenario(value);
    else parseScenario(value);
  } catch (error) {
    if (!(error instanceof InputError)) throw error;
    refuse(name, 'it is not a scenario Pronk can run (nor a study, a result or a project)', error.issues);
  }
  return { kind: 'scenario', scenario: value };
}

/** A study file the CLI runs as it is: the study with its scenario inline. */
export function studyFile(study: Record<string, unknown>, scenario: unknown): Record<string, unknown> {
  const { scenario: _inline, scenario_file: _file, ...rest } = study;
  return { ...rest, scenario };
}

export function downloadText(text: string, fileName: string, type = 'application/json'): void {
  downloadBlob(new Blob([text], { type }), fileName);
}

export function downloadBlob(blob: Blob, fileName: string): void {
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = fileName;
  a.style.display = 'none';
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/** A file name from a scenario's name: lower case, dashes, no path characters. */
export function fileStem(name: unknown, fallback: string): string {
  const text = typeof name === 'string' ? name : '';
  const stem = text.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 48);
  return stem || fallback;
}
