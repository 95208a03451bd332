// Project files: what the workbench saves and opens. A scenario file and a study file are exactly
// what the `pronk` command reads (a study saved here carries its scenario inline); a result file is
// what `pronk optimize` writes and `pronk export` reads; a project file holds all of them.

import { InputError, describeFound } from '../../core/errors.js';
import { parseJson } from '../../core/scenario.js';

export const PROJECT_FORMAT = 'pronk-project';
export const PROJECT_FORMAT_VERSION = 1;

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

/**
 * What an opened file is, by its shape. The content is not validated here: the drafts it fills
 * are, field by field, as if typed. Throws an InputError naming the file for anything else.
 */
export function classifyFile(text: string, name: string): OpenedFile {
  const value = parseJson(text, name);
  if (!isObject(value)) {
    throw new InputError([{ path: '', expected: 'a JSON object: a scenario, a study, a result or a workbench project', found: describeFound(value) }], { source: name });
  }
  if (value.format === PROJECT_FORMAT) return { kind: 'project', project: value as unknown as ProjectFile };
  if (value.format === 'pronk-result') return { kind: 'result', result: value };
  if ('free_parameters' in value || 'objective' in value) {
    const { scenario, scenario_file, ...study } = value;
    return {
      kind: 'study',
      study,
      scenario: isObject(scenario) ? scenario : null,
      scenarioFile: typeof scenario_file === 'string' ? scenario_file : null,
    };
  }
  if ('body' in value || 'policy' in value || 'start' in value) return { kind: 'scenario', scenario: value };
  throw new InputError(
    [{ path: '', expected: 'a scenario (body, start, policy, ...), a study (free_parameters, objective, ...), a pronk-result or a pronk-project', found: `an object with ${Object.keys(value).slice(0, 6).join(', ') || 'no fields'}` }],
    { source: name },
  );
}

/** A study file the CLI runs as it is: the study with its scenario inline. */
export function studyFile(study: Record<string, unknown>, scenario: unknown): Record<string, unknown> {
  const { scenario: _inline, scenario_file: _file, ...rest } = study;
  return { ...rest, scenario };
}

export function downloadText(text: string, fileName: string, type = 'application/json'): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
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
