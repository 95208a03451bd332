// The workbench's state: the drafts being edited, their validation, the last valid scenario that
// every computation uses, the results (each stamped with the scenario it was computed for), the
// jobs running on the workers, and the notices shown to the user. Components read and write it;
// it runs the analyses through the worker pool (compute.ts) and autosaves (persist.ts).

import demoScenarioJson from '../../../scenarios/demo.json' with { type: 'json' };
import demoBipedJson from '../../../scenarios/demo-biped.json' with { type: 'json' };
import demoBipedRunJson from '../../../scenarios/demo-biped-run.json' with { type: 'json' };
import demoHexapodJson from '../../../scenarios/demo-hexapod.json' with { type: 'json' };
import type { LateralMapResult, LateralSimulation } from '../../core/analysis/lateral.js';
import type { KickSpec, RandomKickSpec, RecoverMonteCarloResult } from '../../core/analysis/recover.js';
import type { LateralBasinResult } from '../../core/analysis/lateral-basin.js';
import type { LateralScanResult } from '../../core/analysis/lateral-scan.js';
import { parseLateralScenario, type LateralScenario } from '../../core/models/lateral.js';
import type { LateralRecoveryView } from '../../worker/browser-engine-worker.js';
import type { BipedMapResult } from '../../core/analysis/biped-map.js';
import type { BipedSimulationResult } from '../../core/models/biped-simulate.js';
import { basinRunOptions, defaultBasinAxes, type BasinOptions, type BasinResult } from '../../core/analysis/basin.js';
import type { ReturnMapResult } from '../../core/analysis/return-map.js';
import { canonicalRobustnessOptions, type RobustnessOptions } from '../../core/analysis/robustness.js';
import type { ScanOptions, ScanResult } from '../../core/analysis/scan.js';
import type { StepToleranceResult } from '../../core/analysis/stepdown.js';
import { InputError, type InputIssue } from '../../core/errors.js';
import type { OptimizationResult } from '../../core/optimize/search.js';
import { parseCandidateScenario, parseStudy, type Study } from '../../core/optimize/study.js';
import { canonicalJson } from '../../core/version.js';
import { parseScenario, type Scenario } from '../../core/scenario.js';
import type { SimulationResult } from '../../core/simulate.js';
import { EnginePool, JobCancelled, WorkerLost, type PoolEvent } from '../../worker/browser-pool.js';
import type { BrowserSearchProgress } from '../../worker/browser-optimize.js';
import {
  checkScan,
  pairSurvival,
  runBasin,
  runBipedMap,
  runBipedTrace,
  runLateralMap,
  runLateralRecover,
  runLateralBasin,
  runLateralScan,
  runLateralRecoverMonteCarlo,
  runLateralTrace,
  runReturnMap,
  runRobustness,
  runScan,
  runStepdown,
  runTrace,
  type MonteCarloRun,
  type PairedSurvival,
} from './compute.js';
import { clone, getAt, setAt } from './draft.js';
import { classifyFile, downloadText, fileStem, PROJECT_FORMAT, PROJECT_FORMAT_VERSION, type OpenedFile, type ProjectFile } from './files.js';
import { History, type Drafts, type HistoryState } from './history.js';
import { explainIssues, fieldLabel, type FieldIssue } from './issues.js';
import { draftKind, draftOfKind, KIND_NAMES, lostBySwitch, MODEL_KIND_CHOICES, viewUnsupported, type DraftKind } from './kinds.js';
import { loadDrafts, loadHistory, loadResults, saveDrafts, saveHistory, saveResult } from './persist.js';
import { demoStudyOf, fitStudy, fitText, studyMisfit } from './study-kinds.js';

export type { ViewName } from './kinds.js';
import type { ViewName } from './kinds.js';

/** The demos the workbench offers, each with its kind's demo study: invented machines of every kind. */
export type DemoName = 'slip' | 'biped-walk' | 'biped-run' | 'hexapod';
export const DEMOS: { name: DemoName; label: string; title: string; scenario: unknown }[] = [
  { name: 'slip', label: 'Single-leg runner (Tamarack-9) and its study', title: 'The invented Tamarack-9 demo scenario and study', scenario: demoScenarioJson },
  { name: 'biped-walk', label: 'Two-legged walker (Wren-2) and its study', title: 'scenarios/demo-biped.json and demo-biped-study.json: the invented Wren-2 walking', scenario: demoBipedJson },
  {
    name: 'biped-run',
    label: 'Two-legged runner (Wren-2) and its study',
    title: "scenarios/demo-biped-run.json: the invented Wren-2 running, with the walker's study (demo-biped-study.json)",
    scenario: demoBipedRunJson,
  },
  {
    name: 'hexapod',
    label: 'Six-legged runner (Skitter-6), seen from above, and its study',
    title: 'scenarios/demo-hexapod.json and demo-hexapod-study.json: the invented Skitter-6 on the lateral leg-spring model',
    scenario: demoHexapodJson,
  },
];

/**
 * A lateral scenario held where the workbench holds a scenario (the last valid one, the results'
 * stamps). Only the lateral views read it, through this narrowing; every single-leg view is
 * disabled for the lateral kind (kinds.ts), so none reads a field it has not.
 */
export function asLateral(s: Scenario): LateralScenario | null {
  return (s as { model?: string }).model === 'lateral' ? (s as unknown as LateralScenario) : null;
}

export type Json = Record<string, unknown>;

/** Settings of the views' analyses: drafts too (a field may hold what was typed). */
export interface Settings {
  map: { samples: unknown; iterations: unknown };
  trace: { interval_s: unknown };
  scan: { x: { path: unknown; lo: unknown; hi: unknown; n: unknown }; y: { path: unknown; lo: unknown; hi: unknown; n: unknown }; samples: unknown };
  basin: { mode: 'grid' | 'energy'; heights: { lo: unknown; hi: unknown; n: unknown }; speeds: { lo: unknown; hi: unknown; n: unknown }; strides: unknown };
  montecarlo: { rollouts: unknown; sigma_m: unknown; seed: unknown; terrain: 'random_walk' | 'random_heights'; strides: unknown };
  /** A kick (the lateral model): at a fraction of a stride, in the body frame; Monte Carlo draws each up to these sizes. */
  recover?: { stride: unknown; fraction: unknown; forward: unknown; left: unknown; angle: unknown; rate: unknown; after: unknown; rollouts: unknown; seed: unknown };
  /** The lateral model's basin: errors of the heading to the body axis (deg) and of the angular velocity (deg/s) from the gait's. */
  lateralBasin?: { headings: { lo: unknown; hi: unknown; n: unknown }; rates: { lo: unknown; hi: unknown; n: unknown }; strides: unknown; tolerance: unknown };
  /** The lateral model's stability regions: two parameter axes (no map samples: its gaits are found, not sampled). */
  lateralScan?: { x: { path: unknown; lo: unknown; hi: unknown; n: unknown }; y: { path: unknown; lo: unknown; hi: unknown; n: unknown } };
}

/**
 * The lateral basin's grid as `pronk basin` takes it by default: ±30 deg of heading error and ± a
 * quarter of v/L0 of angular velocity (v the scenario's start speed; the command uses its gait's),
 * 21 x 21, 30 strides, converged within 0.1 deg and deg/s.
 */
export function defaultLateralBasinSettings(scenario?: LateralScenario | null): NonNullable<Settings['lateralBasin']> {
  const span = scenario ? Number((((0.25 * scenario.start.speed_m_per_s) / scenario.body.leg_length_m) * (180 / Math.PI)).toPrecision(3)) : 100;
  return { headings: { lo: -30, hi: 30, n: 21 }, rates: { lo: -span, hi: span, n: 21 }, strides: 30, tolerance: 0.1 };
}

/**
 * The lateral scan's default axes: the attachment offset a quarter of the leg length either side
 * of the centre of mass (9 points, the centre among them) by the touchdown angle 10 deg either side
 * of the scenario's (5 points): behind, at and ahead of the centre (Schmitt & Holmes 2000).
 */
export function defaultLateralScanSettings(scenario?: LateralScenario | null): NonNullable<Settings['lateralScan']> {
  const reach = scenario ? Number((0.25 * scenario.body.leg_length_m).toPrecision(2)) : 0.02;
  const angle = scenario ? scenario.policy.angle.angle_to_body_deg : 60;
  return {
    x: { path: 'body.attachment_offset_m', lo: -reach, hi: reach, n: 9 },
    y: { path: 'policy.angle.angle_to_body_deg', lo: Math.max(1, Math.round(angle - 10)), hi: Math.min(89, Math.round(angle + 10)), n: 5 },
  };
}

export function defaultRecoverSettings(): NonNullable<Settings['recover']> {
  return { stride: 2, fraction: 0.5, forward: 0, left: 0.3, angle: 0, rate: 0, after: 30, rollouts: 400, seed: 1 };
}

/** A result and what it was computed from. */
export interface Stamped<T> {
  value: T;
  /** canonicalJson of the scenario it was computed for. */
  scenarioKey: string;
  at: number;
  seconds: number;
  /** The options it ran with (canonical, for the view's caption). */
  options?: unknown;
}

export interface OptimizationStamp extends Stamped<OptimizationResult> {
  /** The study's base scenario (the baseline policy). */
  baseScenario: Scenario;
  study: Json;
}

export interface ComparisonData {
  baseline: { scenario: Scenario; montecarlo: MonteCarloRun; map: ReturnMapResult; stepdown: StepToleranceResult };
  candidate: { scenario: Scenario; montecarlo: MonteCarloRun; map: ReturnMapResult; stepdown: StepToleranceResult };
  paired: PairedSurvival;
  options: RobustnessOptions;
}

export interface Results {
  map?: Stamped<ReturnMapResult>;
  trace?: Stamped<SimulationResult>;
  stepdown?: Stamped<StepToleranceResult>;
  scan?: Stamped<ScanResult>;
  basin?: Stamped<BasinResult>;
  montecarlo?: Stamped<MonteCarloRun>;
  optimization?: OptimizationStamp;
  compare?: Stamped<ComparisonData>;
  /** The two-leg model's stride trace and section map (models/biped-simulate.ts, analysis/biped-map.ts). */
  bipedTrace?: Stamped<BipedSimulationResult>;
  bipedMap?: Stamped<BipedMapResult>;
  /** The lateral model's run, gaits, one kick and Monte Carlo over kicks. */
  lateralTrace?: Stamped<LateralSimulation>;
  lateralMap?: Stamped<LateralMapResult>;
  lateralRecover?: Stamped<LateralRecoveryView>;
  lateralRecoverMC?: Stamped<RecoverMonteCarloResult>;
  lateralBasin?: Stamped<LateralBasinResult>;
  lateralScan?: Stamped<LateralScanResult>;
}

export interface Job {
  id: number;
  label: string;
  startedAt: number;
  done: number | null;
  total: number | null;
  detail: string;
  /** A phase of the job ("searching", "re-scoring on held-out seeds"), shown with its own progress. */
  phase: string;
  /** Set the moment Cancel is pressed: the button says so at once, before the workers have stopped. */
  cancelling: boolean;
  cancel: () => void;
}

export interface Notice {
  id: number;
  kind: 'error' | 'info';
  text: string;
  at: number;
}

export interface Check<T> {
  value: T | null;
  issues: InputIssue[];
}

/** A question the page asks before it does something that could lose work (an in-page dialog). */
export interface Question {
  id: number;
  title: string;
  text: string;
  choices: { id: string; label: string; primary?: boolean }[];
}

export interface OptimizationLive {
  /** Date.now() when the search began (0: none yet). */
  startedAt: number;
  progress: BrowserSearchProgress | null;
  /** Per restart: (evaluation, best score so far, larger is better) as the search went. */
  history: { evaluation: number; bestScore: number }[][];
}

const SAVED_VERSION = 1;
/** The two-leg section map's samples along the symmetric line, at most (its default is 41). */
export const BIPED_MAP_SAMPLES = 61;
/** The live optimizer view is redrawn at most this often, ms. */
const LIVE_REDRAW_MS = 250;
/** A phase's label as a heading ("searching" → "Searching"). */
export function phaseName(label: string): string {
  return label ? label[0].toUpperCase() + label.slice(1) : label;
}

interface Saved {
  version: number;
  scenario: Json;
  /** The drafts as last saved, opened or loaded from the demo (what "unsaved edits" are measured from). */
  savedKey?: string;
  /** The last valid scenario (the draft may be invalid when the page closes). */
  lastValid?: Scenario;
  study: Json;
  settings: Settings;
  view: ViewName;
}

export function demoStudyDraft(): Json {
  return demoStudyOf('slip');
}

export function demoScenarioDraft(): Json {
  return clone(demoScenarioJson) as Json;
}

export function defaultSettings(scenario: Scenario): Settings {
  // (the two-leg model's basin axes are its section's: core/analysis/basin.ts); the lateral
  // model's views have their own settings, the others keep the single-leg demo's
  if (asLateral(scenario)) return { ...defaultSettings(parseScenario(demoScenarioJson)), recover: defaultRecoverSettings() };
  const axes = defaultBasinAxes(scenario, false);
  const round = (x: number) => Number(x.toPrecision(4));
  const angle = scenario.policy.angle;
  const x = angle.kind === 'fixed'
    ? { path: 'policy.angle.attack_deg', lo: 55, hi: 80, n: 26 }
    : angle.kind === 'retraction'
      ? { path: 'policy.angle.attack_at_apex_deg', lo: 55, hi: 75, n: 21 }
      : { path: 'start.forward_speed_m_per_s', lo: round(0.6 * scenario.start.forward_speed_m_per_s), hi: round(1.4 * scenario.start.forward_speed_m_per_s), n: 21 };
  const y = angle.kind === 'retraction'
    ? { path: 'policy.angle.rate_deg_per_s', lo: 0, hi: 150, n: 16 }
    : { path: 'body.leg_stiffness_N_per_m', lo: round(0.6 * scenario.body.leg_stiffness_N_per_m), hi: round(1.4 * scenario.body.leg_stiffness_N_per_m), n: 16 };
  return {
    map: { samples: 201, iterations: 30 },
    trace: { interval_s: 0.002 },
    scan: { x, y, samples: 101 },
    basin: {
      mode: 'grid',
      heights: { lo: round(axes.heights.low), hi: round(axes.heights.high), n: 41 },
      speeds: { lo: round(axes.speeds!.low), hi: round(axes.speeds!.high), n: 41 },
      strides: 30,
    },
    montecarlo: { rollouts: 1000, sigma_m: 0.01, seed: 1, terrain: 'random_walk', strides: scenario.strides },
  };
}

export function checkScenario(draft: unknown): Check<Scenario> {
  try {
    // the lateral model has its own scenario type (models/lateral.ts), held as asLateral() reads it
    if (draftKind(draft) === 'lateral') return { value: parseLateralScenario(draft) as unknown as Scenario, issues: [] };
    return { value: parseScenario(draft), issues: [] };
  } catch (error) {
    if (error instanceof InputError) return { value: null, issues: error.issues };
    return { value: null, issues: [{ path: '', expected: 'a scenario', found: String(error) }] };
  }
}

/** The study with the scenario draft inline; issues under `scenario.` belong to the scenario editor. */
export function checkStudy(draft: unknown, scenario: unknown): Check<Study> & { scenarioIssues: number } {
  try {
    return { value: parseStudy({ ...(draft as Json), scenario }), issues: [], scenarioIssues: 0 };
  } catch (error) {
    if (!(error instanceof InputError)) return { value: null, issues: [{ path: '', expected: 'a study', found: String(error) }], scenarioIssues: 0 };
    const own = error.issues.filter((i) => !(i.path === 'scenario' || i.path.startsWith('scenario.')));
    return { value: null, issues: own, scenarioIssues: error.issues.length - own.length };
  }
}

const num = (v: unknown) => v as number;

/** Settings → the options each analysis takes (numbers as typed; the analyses' checks report). */
export function scanOptions(s: Settings['scan']): ScanOptions {
  const axis = (a: Settings['scan']['x']) => ({ path: String(a.path ?? ''), lo: num(a.lo), hi: num(a.hi), n: num(a.n) });
  return { x: axis(s.x), y: axis(s.y), samples: num(s.samples) };
}

export function basinOptions(s: Settings['basin']): BasinOptions {
  const axis = (a: { lo: unknown; hi: unknown; n: unknown }) => ({ low: num(a.lo), high: num(a.hi), count: num(a.n) });
  return s.mode === 'energy'
    ? { energy: true, heights: axis(s.heights), strides: num(s.strides) }
    : { heights: axis(s.heights), speeds: axis(s.speeds), strides: num(s.strides) };
}

export function montecarloOptions(s: Settings['montecarlo']): RobustnessOptions {
  return { rollouts: num(s.rollouts), sigma_m: num(s.sigma_m), seed: num(s.seed), terrain: s.terrain, strides: s.strides === undefined ? undefined : num(s.strides) };
}

/** Issue paths of the analyses' option checks → the settings fields they name. */
const SETTING_PATHS: Record<string, Record<string, string>> = {
  scan: { '--x': 'scan.x', '--y': 'scan.y', '--samples': 'scan.samples', '--x, --y': 'scan.x' },
  basin: { heights: 'basin.heights', speeds: 'basin.speeds', strides: 'basin.strides', 'heights × speeds': 'basin.heights' },
  montecarlo: {},
  recover: {},
  lateralScan: { '--x': 'lateralScan.x', '--y': 'lateralScan.y', '--x, --y': 'lateralScan.x' },
  lateralBasin: { headings: 'lateralBasin.headings', rates: 'lateralBasin.rates', strides: 'lateralBasin.strides', tolerance: 'lateralBasin.tolerance', 'headings × rates': 'lateralBasin.headings' },
};

export function settingsIssues(kind: 'scan' | 'basin' | 'montecarlo' | 'recover' | 'lateralBasin' | 'lateralScan', error: unknown): InputIssue[] | null {
  if (!(error instanceof InputError)) return null;
  return error.issues.map((issue) => ({ ...issue, path: SETTING_PATHS[kind][issue.path] ?? (kind === 'montecarlo' ? `montecarlo.${issue.path}` : `${kind}.${issue.path}`) }));
}

let noticeId = 0;
let jobId = 0;
let questionId = 0;

/** One part of a drafts key (draftsKey) as JSON.stringify writes it; '' when the key is not one. */
export function savedPart(key: string, part: 'scenario' | 'study'): string {
  try {
    return JSON.stringify((JSON.parse(key) as Record<string, unknown>)[part]);
  } catch {
    return '';
  }
}

/** The drafts as one comparable text. */
export function draftsKey(scenario: unknown, study: unknown): string {
  return JSON.stringify({ scenario, study });
}

export class Workbench {
  scenarioDraft = $state<Json>(demoScenarioDraft());
  studyDraft = $state<Json>(demoStudyDraft());
  settings = $state<Settings>(defaultSettings(parseScenario(demoScenarioJson)));
  view = $state<ViewName>('map');

  scenarioCheck = $derived(checkScenario(this.scenarioDraft));
  /** The model kind of the draft (the editor's sections) and of the last valid scenario (the views). */
  draftKind = $derived<DraftKind>(draftKind(this.scenarioDraft));
  studyCheck = $derived(checkStudy(this.studyDraft, this.scenarioDraft));
  /** The issues as the editors show them: labelled, two-field errors on both fields. */
  scenarioIssues = $derived<FieldIssue[]>(explainIssues('sc', this.scenarioCheck.issues, this.scenarioDraft));
  studyIssues = $derived<FieldIssue[]>(explainIssues('st', this.studyCheck.issues, this.studyDraft));

  /** The drafts as last saved, opened or loaded; edits since then are "unsaved". */
  savedKey = $state(draftsKey(demoScenarioDraft(), demoStudyDraft()));
  dirty = $derived(draftsKey(this.scenarioDraft, this.studyDraft) !== this.savedKey);
  /** The study has edits that are in no file (a fit to another model kind asks before it drops any of them). */
  studyDirty = $derived(JSON.stringify(this.studyDraft) !== savedPart(this.savedKey, 'study'));
  /** What of the study the scenario's model kind cannot search (study-kinds.ts): the editor offers to fit it. */
  studyMisfit = $derived(studyMisfit(this.studyDraft, this.scenarioDraft));

  /** Undo and redo of the drafts (kept across a reload). */
  readonly history: History;
  /** Bumped on every change of the history, for the buttons that read it. */
  historyRevision = $state(0);
  undoLabel = $derived.by(() => {
    void this.historyRevision;
    return this.history.past.at(-1)?.label ?? null;
  });
  redoLabel = $derived.by(() => {
    void this.historyRevision;
    return this.history.future.at(-1)?.label ?? null;
  });
  private grouped = false;
  private tickRecorded = false;

  /** The question on screen, and its answer's resolver. */
  question = $state<Question | null>(null);
  private answer: ((choice: string) => void) | null = null;

  /** The scenario every computation uses: the draft when valid, else the last valid one. */
  lastValid = $state.raw<{ scenario: Scenario; key: string; at: number }>({
    scenario: parseScenario(demoScenarioJson),
    key: canonicalJson(parseScenario(demoScenarioJson)),
    at: Date.now(),
  });

  results = $state.raw<Results>({});
  jobs = $state<Record<string, Job>>({});
  notices = $state<Notice[]>([]);
  live = $state.raw<OptimizationLive>({ startedAt: 0, progress: null, history: [] });
  /** Issues of the views' settings, by settings path (scan.x, basin.strides, montecarlo.rollouts...). */
  settingsIssues = $state<InputIssue[]>([]);
  autosaveFailed = $state(false);
  /** Asks the export dialog to open, for a policy source ('scenario' or 'result'). */
  exportRequest = $state<{ source: 'scenario' | 'result'; n: number }>({ source: 'scenario', n: 0 });
  /** The drafts came from this browser's autosave (not the demo). */
  readonly restored: boolean = false;

  readonly pool: EnginePool;
  private autoTimer: ReturnType<typeof setTimeout> | undefined;
  private autoPending = false;

  constructor(options: { workers?: number; pool?: EnginePool } = {}) {
    const cores = typeof navigator !== 'undefined' && navigator.hardwareConcurrency ? navigator.hardwareConcurrency : 2;
    this.pool = options.pool ?? new EnginePool(options.workers ?? Math.max(1, Math.min(4, cores)), undefined, (e) => this.onPoolEvent(e));
    const saved = loadDrafts<Saved>();
    if (saved && saved.version === SAVED_VERSION) {
      this.scenarioDraft = saved.scenario;
      this.studyDraft = saved.study;
      this.settings = { ...this.settings, ...saved.settings };
      this.view = saved.view;
      this.restored = true;
      // an autosave from before "unsaved" was tracked: unsaved unless it is the demo
      if (typeof saved.savedKey === 'string') this.savedKey = saved.savedKey;
    }
    this.history = new History(loadHistory<HistoryState>());
    const check = checkScenario(this.scenarioDraft);
    const last = check.value ?? (saved?.lastValid ? checkScenario(saved.lastValid).value : null);
    if (last) this.lastValid = { scenario: last, key: canonicalJson(last), at: Date.now() };
  }

  /** Starts the effects (autosave, last valid scenario, automatic analyses); call in a component's init. */
  start(): void {
    $effect(() => {
      const check = this.scenarioCheck;
      if (!check.value) return;
      const key = canonicalJson(check.value);
      if (key !== this.lastValid.key) this.lastValid = { scenario: check.value, key, at: Date.now() };
    });
    $effect(() => {
      const saved: Saved = {
        version: SAVED_VERSION,
        scenario: $state.snapshot(this.scenarioDraft) as Json,
        study: $state.snapshot(this.studyDraft) as Json,
        settings: $state.snapshot(this.settings) as Settings,
        view: this.view,
        lastValid: this.lastValid.scenario,
        savedKey: this.savedKey,
      };
      this.autosaveFailed = !saveDrafts(saved);
    });
    $effect(() => {
      void this.historyRevision;
      saveHistory(this.history.toJSON());
    });
    $effect(() => {
      void this.lastValid.key;
      void this.settings.map.samples;
      void this.settings.map.iterations;
      void this.settings.trace.interval_s;
      clearTimeout(this.autoTimer);
      this.autoTimer = setTimeout(() => void this.runAutomatic(), 150);
    });
    void loadResults().then((stored) => {
      const restored = { ...this.results };
      for (const [name, value] of Object.entries(stored)) {
        if (!(name in restored)) (restored as Record<string, unknown>)[name] = value;
      }
      this.results = restored;
    });
  }

  // -------------------------------------------------------------------------------------------
  // Drafts.

  private drafts(): Drafts {
    return { scenario: $state.snapshot(this.scenarioDraft) as Json, study: $state.snapshot(this.studyDraft) as Json };
  }

  /**
   * Records the drafts as they are before a change. Everything one action changes (in one task)
   * is one step; keystrokes in one field (`key`) soon after each other are one step.
   */
  private record(label: string, key: string | null = null): void {
    if (this.grouped || this.tickRecorded) return;
    this.history.record(this.drafts(), label, key);
    this.tickRecorded = true;
    queueMicrotask(() => (this.tickRecorded = false));
    this.historyRevision++;
  }

  /** Runs `change` as one undoable step called `label`. */
  group(label: string, change: () => void): void {
    this.record(label);
    this.history.seal();
    const outer = this.grouped;
    this.grouped = true;
    try {
      change();
    } finally {
      this.grouped = outer;
    }
  }

  setScenarioField(path: string, value: unknown): void {
    this.record(fieldLabel('sc', path), `sc:${path}`);
    setAt(this.scenarioDraft, path, value);
  }

  setStudyField(path: string, value: unknown): void {
    this.record(fieldLabel('st', path, this.studyDraft), `st:${path}`);
    setAt(this.studyDraft, path, value);
  }

  /** Replaces the drafts wholesale (an opened file); results of another scenario become stale. */
  loadScenarioDraft(draft: Json): void {
    this.record('Scenario replaced');
    this.scenarioDraft = clone(draft);
  }

  loadStudyDraft(draft: Json): void {
    this.record('Study replaced');
    this.studyDraft = clone(draft);
  }

  undo(): void {
    const step = this.history.undo(this.drafts());
    if (!step) return;
    this.scenarioDraft = clone(step.drafts.scenario);
    this.studyDraft = clone(step.drafts.study);
    this.historyRevision++;
  }

  redo(): void {
    const step = this.history.redo(this.drafts());
    if (!step) return;
    this.scenarioDraft = clone(step.drafts.scenario);
    this.studyDraft = clone(step.drafts.study);
    this.historyRevision++;
  }

  /** The drafts (or one of them) now match a file, saved or opened: nothing of them is unsaved. */
  markSaved(part?: 'scenario' | 'study'): void {
    const now = JSON.parse(draftsKey(this.scenarioDraft, this.studyDraft)) as { scenario: unknown; study: unknown };
    if (part) {
      let before: { scenario: unknown; study: unknown };
      try {
        before = JSON.parse(this.savedKey) as typeof before;
      } catch {
        before = { scenario: null, study: null };
      }
      if (part === 'scenario') now.study = before.study;
      else now.scenario = before.scenario;
    }
    this.savedKey = draftsKey(now.scenario, now.study);
  }

  /** Asks a question in the page; resolves with the chosen id ('cancel' when dismissed). */
  ask(title: string, text: string, choices: Question['choices']): Promise<string> {
    this.answer?.('cancel');
    return new Promise((resolve) => {
      this.question = { id: ++questionId, title, text, choices };
      this.answer = (choice) => {
        this.question = null;
        this.answer = null;
        resolve(choice);
      };
    });
  }

  respond(choice: string): void {
    this.answer?.(choice);
  }

  /** Before the drafts are replaced: asks when there are unsaved edits. False: leave them. */
  async mayReplace(what: string): Promise<boolean> {
    if (!this.dirty) return true;
    const choice = await this.ask(
      'Replace the unsaved edits?',
      `${what} replaces the scenario and the study being edited, which have changes that are not saved in a file. Undo (Ctrl+Z) brings them back.`,
      [
        { id: 'save', label: 'Save the project first' },
        { id: 'replace', label: 'Replace them', primary: true },
        { id: 'cancel', label: 'Keep editing' },
      ],
    );
    if (choice === 'save') {
      this.saveProject();
      return true;
    }
    return choice === 'replace';
  }

  /** Loads a demo with its kind's demo study (the study's limits, terms and free parameters are the kind's). */
  async resetToDemo(name: DemoName = 'slip'): Promise<void> {
    const demo = DEMOS.find((d) => d.name === name) ?? DEMOS[0];
    if (!(await this.mayReplace(`The demo "${demo.label}"`))) return;
    this.group('Demo loaded', () => {
      this.scenarioDraft = clone(demo.scenario) as Json;
      this.studyDraft = fitStudy(demoStudyOf(draftKind(demo.scenario)), demo.scenario).study;
    });
    // the views' settings (basin and scan axes, Monte Carlo strides) follow the demo's robot
    const parsed = checkScenario(demo.scenario).value;
    if (parsed) this.settings = defaultSettings(parsed);
    // a view the demo's kind does not run gives way to its stride view
    if (viewUnsupported(draftKind(demo.scenario), this.view)) this.view = 'stride';
    this.markSaved();
  }

  // -------------------------------------------------------------------------------------------
  // Files.

  projectFile(): ProjectFile {
    return {
      format: PROJECT_FORMAT,
      format_version: PROJECT_FORMAT_VERSION,
      saved: new Date().toISOString(),
      scenario: $state.snapshot(this.scenarioDraft),
      study: $state.snapshot(this.studyDraft),
      settings: $state.snapshot(this.settings),
      optimization: this.results.optimization ? $state.snapshot(this.results.optimization) : null,
    };
  }

  saveProject(): void {
    downloadText(`${JSON.stringify(this.projectFile(), null, 2)}\n`, `${fileStem(this.scenarioDraft.name, 'scenario')}.pronk-project.json`);
    this.markSaved();
  }

  /** Downloads the last optimization's result file, as `pronk optimize --out` writes it. */
  saveResult(): void {
    const result = this.results.optimization;
    if (result) downloadText(`${JSON.stringify(result.value, null, 2)}\n`, `${fileStem(this.scenarioDraft.name, 'scenario')}.result.json`);
  }

  /**
   * Opens a file's text: refused with the reasons when it is not a scenario, a study, a result or
   * a project (nothing changes); asks first when it would replace unsaved edits.
   */
  async openFile(text: string, name: string): Promise<OpenedFile['kind'] | null> {
    let opened: OpenedFile;
    try {
      opened = classifyFile(text, name, { scenario: $state.snapshot(this.scenarioDraft) });
    } catch (error) {
      this.notify('error', error instanceof InputError ? error.format() : `${name}: not opened: ${error instanceof Error ? error.message : String(error)}`);
      return null;
    }
    if (opened.kind === 'result') {
      let stamp: OptimizationStamp;
      try {
        stamp = stampFromResult(opened.result);
      } catch (error) {
        this.notify('error', error instanceof InputError ? error.format(name) : `${name}: not opened: ${String(error)}`);
        return null;
      }
      this.results = { ...this.results, optimization: stamp, compare: undefined };
      this.view = 'optimize';
      this.notify('info', `Opened the optimization result ${name}.`);
      return 'result';
    }
    if (!(await this.mayReplace(`Opening ${name}`))) return null;
    switch (opened.kind) {
      case 'scenario': {
        // the study follows the scenario's model kind (the question above covered unsaved edits)
        const fit = fitStudy($state.snapshot(this.studyDraft) as Json, opened.scenario);
        this.group(`Opened ${name}`, () => {
          this.scenarioDraft = clone(opened.scenario);
          this.studyDraft = fit.study;
        });
        const kind = draftKind(opened.scenario);
        const changed = fitText(fit);
        this.notify(
          'info',
          `Opened the scenario ${name}.` + (changed ? ` The study now fits the ${KIND_NAMES[kind]} model: it ${changed}. Undo (Ctrl+Z) brings the study back.` : ''),
        );
        if (viewUnsupported(kind, this.view)) this.view = 'stride';
        break;
      }
      case 'study':
        this.group(`Opened ${name}`, () => {
          this.studyDraft = clone(opened.study);
          if (opened.scenario) this.scenarioDraft = clone(opened.scenario);
        });
        this.notify(
          'info',
          opened.scenarioFile
            ? `Opened the study ${name}. It names the scenario file ${opened.scenarioFile}: it runs on the scenario in the editor (open that file too if it is another).`
            : `Opened the study ${name} with its scenario.`,
        );
        break;
      case 'project': {
        const p = opened.project;
        this.group(`Opened ${name}`, () => {
          this.scenarioDraft = clone(p.scenario as Json);
          this.studyDraft = clone(p.study as Json);
        });
        const check = checkScenario(this.scenarioDraft).value;
        const settings = (p.settings ?? {}) as Partial<Settings>;
        this.settings = { ...(check ? defaultSettings(check) : this.settings), ...settings };
        if (p.optimization) this.results = { ...this.results, optimization: p.optimization as OptimizationStamp, compare: undefined };
        this.notify('info', `Opened the project ${name}.`);
        break;
      }
    }
    this.markSaved();
    return opened.kind;
  }

  /**
   * Switches a policy's kind. When the study sets free parameters that the new kind does not
   * have, asks: drop those free parameters, or keep the old kind.
   */
  async switchPolicyKind(base: 'policy.angle' | 'policy.stiffness', next: Json, kindLabel: string): Promise<boolean> {
    const after = clone($state.snapshot(this.scenarioDraft) as Json);
    setAt(after, base, next);
    const free = (Array.isArray(this.studyDraft.free_parameters) ? this.studyDraft.free_parameters : []) as Json[];
    const orphaned = free
      .map((p, i) => ({ p, i }))
      .filter(({ p }) => typeof p.path === 'string' && (p.path === base || p.path.startsWith(`${base}.`)) && typeof getAt(after, p.path) !== 'number');
    const oldKind = String((getAt(this.scenarioDraft, base) as Json | undefined)?.kind ?? '');
    if (orphaned.length > 0) {
      const names = orphaned.map(({ p, i }) => `${i + 1} (${fieldLabel('sc', String(p.path))})`).join(', ');
      const all = orphaned.length === free.length;
      const choice = await this.ask(
        'The study uses the old policy',
        `The study's free parameter${orphaned.length === 1 ? '' : 's'} ${names} belong${orphaned.length === 1 ? 's' : ''} to the ${oldKind.replaceAll('_', ' ')} policy, which a ${kindLabel.toLowerCase()} does not have.` +
          (all ? ' Dropping them leaves the study without free parameters: add one for the new policy.' : ''),
        [
          { id: 'drop', label: `Drop ${orphaned.length === 1 ? 'that free parameter' : 'those free parameters'}`, primary: true },
          { id: 'keep', label: `Keep the ${oldKind.replaceAll('_', ' ')} policy` },
        ],
      );
      if (choice !== 'drop') return false;
      const dropped = new Set(orphaned.map(({ i }) => i));
      this.group(`${kindLabel}; free parameters dropped`, () => {
        setAt(this.scenarioDraft, base, next);
        this.studyDraft.free_parameters = clone(free.filter((_, i) => !dropped.has(i)));
      });
      return true;
    }
    this.group(kindLabel, () => setAt(this.scenarioDraft, base, next));
    return true;
  }

  /** Loads a point of a map into the scenario (one undoable step). */
  loadPoint(label: string, values: { path: string; value: number }[]): void {
    this.group(label, () => {
      for (const v of values) setAt(this.scenarioDraft, v.path, Number(v.value.toPrecision(12)));
    });
    this.notify('info', `${label}: ${values.map((v) => `${fieldLabel('sc', v.path)} ${Number(v.value.toPrecision(6))}`).join(', ')}. Undo (Ctrl+Z) goes back.`);
  }

  /** Loads a stability map's cell, its values of the map's two parameters, into the scenario. */
  loadScanCell(scan: { x: { path: string }; y: { path: string }; cells: readonly { x: number; y: number }[] }, index: number): void {
    const cell = scan.cells[index];
    if (!cell) return;
    this.loadPoint('Point loaded from the stability map', [
      { path: scan.x.path, value: cell.x },
      { path: scan.y.path, value: cell.y },
    ]);
  }

  /** The model kind the views show: the last valid scenario's. */
  get kind(): DraftKind {
    return draftKind(this.lastValid.scenario);
  }

  /**
   * Switches the scenario's model kind. The fields the new kind has not (a two-leg scenario's
   * legs, a lateral body's moment of inertia, a policy the lateral model cannot run) are listed in
   * a question first; the study's free parameters that the new scenario has not are dropped with
   * them. One undoable step.
   */
  async switchModelKind(kind: DraftKind): Promise<boolean> {
    const current = draftKind(this.scenarioDraft);
    if (kind === current) return true;
    const before = clone($state.snapshot(this.scenarioDraft) as Json);
    const next = draftOfKind(kind, before);
    const lost = lostBySwitch(kind, before);
    // the study follows: the limits, terms and free parameters the new kind has not are dropped
    const fit = fitStudy($state.snapshot(this.studyDraft) as Json, next);
    const label = MODEL_KIND_CHOICES.find((c) => c.value === kind)?.label ?? kind;
    const studyChange = fitText(fit);
    // asked when the switch drops scenario fields, or study edits that are in no file
    if (lost.length > 0 || (fit.dropped.length > 0 && this.studyDirty)) {
      const names = lost.map((path) => fieldLabel('sc', path));
      const choice = await this.ask(
        `Switch to the ${KIND_NAMES[kind]} model?`,
        (lost.length
          ? `The ${KIND_NAMES[kind]} model has no ${names.join(', ')}: the switch drops ${lost.length === 1 ? 'that field' : 'those fields'}.`
          : `The switch keeps the scenario's fields.`) +
          (studyChange ? ` The study's search for the ${KIND_NAMES[kind]} model ${studyChange}.` : '') +
          ' Undo (Ctrl+Z) brings them back.',
        [
          { id: 'switch', label: `Switch and drop ${lost.length + fit.dropped.length === 1 ? 'it' : 'them'}`, primary: true },
          { id: 'keep', label: `Keep the ${KIND_NAMES[current]} model` },
        ],
      );
      if (choice !== 'switch') return false;
    }
    this.group(`Model: ${label}`, () => {
      this.scenarioDraft = next;
      this.studyDraft = fit.study;
    });
    if (studyChange) this.notify('info', `The study now fits the ${KIND_NAMES[kind]} model: it ${studyChange}. Undo (Ctrl+Z) goes back.`);
    const valid = checkScenario(next).value;
    if (valid) this.settings = defaultSettings(valid);
    return true;
  }

  /** Fits the study to the scenario's model kind (study-kinds.ts), one undoable step; asks before it drops study edits that are in no file. */
  async fitStudyToKind(): Promise<boolean> {
    const scenario = $state.snapshot(this.scenarioDraft) as Json;
    const fit = fitStudy($state.snapshot(this.studyDraft) as Json, scenario);
    const change = fitText(fit);
    if (!change) return true;
    const kind = KIND_NAMES[draftKind(scenario)];
    if (fit.dropped.length > 0 && this.studyDirty) {
      const choice = await this.ask(`Fit the study to the ${kind} model?`, `The ${kind} model's search ${change}. Undo (Ctrl+Z) brings them back.`, [
        { id: 'fit', label: 'Fit the study', primary: true },
        { id: 'keep', label: 'Keep the study as it is' },
      ]);
      if (choice !== 'fit') return false;
    }
    this.group(`Study fitted to the ${kind} model`, () => (this.studyDraft = fit.study));
    this.notify('info', `The study now fits the ${kind} model: it ${change}. Undo (Ctrl+Z) goes back.`);
    return true;
  }

  isCurrent(stamp: { scenarioKey: string } | undefined): boolean {
    return stamp !== undefined && stamp.scenarioKey === this.lastValid.key;
  }

  // -------------------------------------------------------------------------------------------
  // Notices and jobs.

  notify(kind: Notice['kind'], text: string): void {
    const notice = { id: ++noticeId, kind, text, at: Date.now() };
    this.notices = [...this.notices.slice(-5), notice];
    if (kind === 'info') setTimeout(() => this.dismiss(notice.id), 8000);
  }

  dismiss(id: number): void {
    this.notices = this.notices.filter((n) => n.id !== id);
  }

  private onPoolEvent(event: PoolEvent): void {
    if (event.kind === 'worker-died') {
      this.notify('error', `A compute worker stopped (${event.message}). It was restarted; your edits and results are kept.`);
    } else if (event.kind === 'worker-failed-to-start') {
      this.notify('error', `A compute worker could not start: ${event.message}`);
    }
  }

  running(name: string): boolean {
    return name in this.jobs;
  }

  cancel(name: string): void {
    const job = this.jobs[name];
    if (!job || job.cancelling) return;
    job.cancelling = true;
    job.cancel();
  }

  /**
   * Runs one named job: progress into `jobs[name]`, a cancel, and every failure as a notice.
   * Returns undefined when it was cancelled or failed.
   */
  async job<T>(
    name: string,
    label: string,
    body: (signal: AbortSignal, progress: (done: number, total: number, detail?: string, phase?: string) => void) => Promise<T>,
  ): Promise<T | undefined> {
    if (this.jobs[name]) this.jobs[name].cancel();
    const controller = new AbortController();
    const id = ++jobId;
    const job: Job = { id, label, startedAt: Date.now(), done: null, total: null, detail: '', phase: '', cancelling: false, cancel: () => controller.abort() };
    this.jobs[name] = job;
    // after a cancel, only a later phase (the held-out re-scoring of the best point so far) reports
    let stoppedPhase: string | null = null;
    controller.signal.addEventListener('abort', () => (stoppedPhase = this.jobs[name]?.id === id ? this.jobs[name].phase : ''));
    try {
      return await body(controller.signal, (done, total, detail, phase) => {
        const j = this.jobs[name];
        if (!j || j.id !== id || (controller.signal.aborted && (phase === undefined || phase === stoppedPhase))) return;
        j.done = done;
        j.total = total;
        if (detail !== undefined) j.detail = detail;
        if (phase !== undefined) j.phase = phase;
      });
    } catch (error) {
      if (error instanceof JobCancelled) this.notify('info', `${label}: cancelled.`);
      else this.reportError(label, error);
      return undefined;
    } finally {
      if (this.jobs[name]?.id === id) delete this.jobs[name];
    }
  }

  private reportError(label: string, error: unknown): void {
    if (error instanceof WorkerLost) {
      this.notify('error', `${label} stopped: a worker failed (${error.message}). It was restarted; your edits are kept — run it again.`);
    } else if (error instanceof InputError) {
      this.notify('error', `${label}: ${error.format()}`);
    } else {
      this.notify('error', `${label} failed: ${error instanceof Error ? error.message : String(error)}`);
    }
  }

  private stamp<T>(value: T, started: number, options?: unknown, scenarioKey = this.lastValid.key): Stamped<T> {
    return { value, scenarioKey, at: Date.now(), seconds: (performance.now() - started) / 1000, options };
  }

  private keep<K extends keyof Results>(name: K, value: Results[K]): void {
    this.results = { ...this.results, [name]: value };
    // The result is plain data (from the workers and the finishers): a snapshot of all of it was
    // a deep copy costing 0.2 s for a big basin. Only the options may hold state proxies.
    const stamp = value as Stamped<unknown> | undefined;
    void saveResult(name, stamp && { ...stamp, options: $state.snapshot(stamp.options) });
  }

  // -------------------------------------------------------------------------------------------
  // Analyses. Each uses the last valid scenario.

  /** The return map, the stride trace and the step tolerance follow every valid edit. */
  async runAutomatic(): Promise<void> {
    if (this.jobs.auto) {
      this.autoPending = true;
      return;
    }
    const { scenario, key } = this.lastValid;
    const samples = Number(this.settings.map.samples);
    const iterations = Number(this.settings.map.iterations);
    const interval = Number(this.settings.trace.interval_s);
    const started = performance.now();
    const kind = draftKind(scenario);
    const lateral = asLateral(scenario);
    if (lateral) {
      await this.job('auto', 'Gaits and run', async (signal, progress) => {
        progress(0, 2, 'gaits');
        const [map, trace] = await Promise.all([
          runLateralMap(this.pool, lateral, { signal }),
          interval > 0 && interval <= 0.1 ? runLateralTrace(this.pool, lateral, { dt: interval }, { signal }) : Promise.resolve(undefined),
        ]);
        progress(2, 2);
        this.keep('lateralMap', this.stamp(map, started, undefined, key));
        if (trace) this.keep('lateralTrace', this.stamp(trace, started, { interval_s: interval }, key));
      });
    } else if (kind === 'biped') {
      await this.runBipedAutomatic(scenario, key, { samples, iterations, interval, started });
    } else await this.job('auto', 'Return map and stride', async (signal, progress) => {
      progress(0, 3, 'return map');
      const mapOk = Number.isInteger(samples) && samples >= 2 && samples <= 5000 && Number.isInteger(iterations) && iterations >= 0 && iterations <= 1000;
      const [map, trace, stepdown] = await Promise.all([
        mapOk ? runReturnMap(this.pool, scenario, { samples, iterations }, { signal }) : Promise.resolve(undefined),
        interval > 0 && interval <= 0.1 ? runTrace(this.pool, scenario, { strides: scenario.strides, interval_s: interval }, { signal }) : Promise.resolve(undefined),
        runStepdown(this.pool, scenario, { signal }),
      ]);
      progress(3, 3);
      if (map) this.keep('map', this.stamp(map, started, { samples, iterations }, key));
      if (trace) this.keep('trace', this.stamp(trace, started, { interval_s: interval }, key));
      this.keep('stepdown', this.stamp(stepdown, started, undefined, key));
    });
    if (this.autoPending) {
      this.autoPending = false;
      void this.runAutomatic();
    }
  }

  /**
   * The two-leg model's automatic analyses: the section map (its samples along the symmetric line
   * from the map settings, capped: each is a kernel stride, and the fixed-point search adds its own)
   * and the stride trace.
   */
  private async runBipedAutomatic(scenario: Scenario, key: string, o: { samples: number; iterations: number; interval: number; started: number }): Promise<void> {
    await this.job('auto', 'Section map and stride', async (signal, progress) => {
      progress(0, 2, 'section map');
      const mapOk = Number.isInteger(o.samples) && o.samples >= 2 && o.samples <= 5000 && Number.isInteger(o.iterations) && o.iterations >= 0 && o.iterations <= 1000;
      const mapOptions = { samples: Math.min(o.samples, BIPED_MAP_SAMPLES), iterations: o.iterations };
      const [map, trace, stepdown] = await Promise.all([
        mapOk ? runBipedMap(this.pool, scenario, mapOptions, { signal }) : Promise.resolve(undefined),
        o.interval > 0 && o.interval <= 0.1 ? runBipedTrace(this.pool, scenario, { strides: scenario.strides, interval_s: o.interval }, { signal }) : Promise.resolve(undefined),
        runStepdown(this.pool, scenario, { signal }),
      ]);
      progress(2, 2);
      if (map) this.keep('bipedMap', this.stamp(map, o.started, mapOptions, key));
      if (trace) this.keep('bipedTrace', this.stamp(trace, o.started, { interval_s: o.interval }, key));
      this.keep('stepdown', this.stamp(stepdown, o.started, undefined, key));
    });
  }

  /** False (with a notice) when the last valid scenario's kind does not run `view`: never run it as another kind. */
  private kindRuns(view: ViewName): boolean {
    const reason = viewUnsupported(this.kind, view);
    if (reason) this.notify('error', `${reason[0].toUpperCase()}${reason.slice(1)}.`);
    return reason === null;
  }

  private checkSettings(kind: 'scan' | 'basin' | 'montecarlo' | 'recover' | 'lateralBasin' | 'lateralScan', check: () => void): boolean {
    const others = this.settingsIssues.filter((i) => !i.path.startsWith(`${kind}.`));
    try {
      check();
      this.settingsIssues = others;
      return true;
    } catch (error) {
      const issues = settingsIssues(kind, error);
      if (!issues) throw error;
      this.settingsIssues = [...others, ...issues];
      return false;
    }
  }

  async runScan(): Promise<void> {
    if (!this.kindRuns('scan')) return;
    if (asLateral(this.lastValid.scenario)) return this.runLateralScan();
    const { scenario, key } = this.lastValid;
    const options = scanOptions(this.settings.scan);
    if (!this.checkSettings('scan', () => checkScan(scenario, options))) return;
    const started = performance.now();
    const result = await this.job('scan', 'Stability scan', (signal, progress) =>
      runScan(this.pool, scenario, options, { signal, onProgress: (d, t) => progress(d, t, 'cells') }),
    );
    if (result) this.keep('scan', this.stamp(result, started, options, key));
  }

  async runBasin(): Promise<void> {
    if (!this.kindRuns('basin')) return;
    if (asLateral(this.lastValid.scenario)) return this.runLateralBasin();
    const { scenario, key } = this.lastValid;
    const options = basinOptions(this.settings.basin);
    if (!this.checkSettings('basin', () => runBasinCheck(scenario, options))) return;
    const started = performance.now();
    const result = await this.job('basin', 'Basin of attraction', (signal, progress) =>
      runBasin(this.pool, scenario, options, { signal, onProgress: (d, t) => progress(d, t, 'ranges') }),
    );
    if (result) this.keep('basin', this.stamp(result, started, options, key));
  }

  async runMonteCarlo(): Promise<void> {
    if (!this.kindRuns('montecarlo')) return;
    const { scenario, key } = this.lastValid;
    const options = montecarloOptions(this.settings.montecarlo);
    if (!this.checkSettings('montecarlo', () => runMonteCarloCheck(scenario, options))) return;
    const started = performance.now();
    const result = await this.job('montecarlo', 'Monte Carlo', (signal, progress) =>
      runRobustness(this.pool, scenario, options, { signal, onProgress: (d, t) => progress(d, t, 'ranges') }),
    );
    if (result) this.keep('montecarlo', this.stamp(result, started, options, key));
  }

  /** The study's search, with the last valid scenario as its base. */
  async runOptimization(): Promise<void> {
    if (!this.kindRuns('optimize')) return;
    const { scenario, key } = this.lastValid;
    const check = checkStudy(this.studyDraft, scenario);
    if (!check.value) {
      this.notify('error', `The study has ${check.issues.length} problem${check.issues.length === 1 ? '' : 's'}; see the Study section.`);
      return;
    }
    const study = { ...($state.snapshot(this.studyDraft) as Json), scenario };
    const { optimizeInBrowser } = await import('../../worker/browser-optimize.js');
    const started = performance.now();
    const restarts = check.value.search.restarts;
    const history: OptimizationLive['history'] = Array.from({ length: restarts }, () => []);
    const startedAt = Date.now();
    this.live = { startedAt, progress: null, history };
    // The page redraws the live figure at most every LIVE_REDRAW_MS: the main thread stays free.
    // Each phase (screening the start points, the search, the held-out re-scoring) has its own
    // progress, in its own unit, under its own name.
    let shown = 0;
    let latest: BrowserSearchProgress | null = null;
    const show = (progress: (done: number, total: number, detail?: string, phase?: string) => void) => {
      if (!latest) return;
      shown = performance.now();
      this.live = { startedAt, progress: latest, history: history.map((h) => h.slice()) };
      progress(latest.done, latest.total, latest.unit, phaseName(latest.label));
    };
    const result = await this.job('optimize', 'Optimization', async (signal, progress) => {
      const flush = setInterval(() => show(progress), LIVE_REDRAW_MS);
      try {
        return await optimizeInBrowser(study, {
          signal,
          onProgress: (p) => {
            for (const r of p.perRestart) {
              const h = history[r.restart];
              if (h && r.evaluations > 0 && r.bestScore !== null && (h.length === 0 || h[h.length - 1].evaluation !== r.evaluations)) {
                if (h.length < 5000) h.push({ evaluation: r.evaluations, bestScore: r.bestScore });
              }
            }
            const phaseChanged = latest !== null && latest.phase !== p.phase;
            latest = p;
            if (phaseChanged || performance.now() - shown >= LIVE_REDRAW_MS) show(progress);
          },
        });
      } finally {
        clearInterval(flush);
      }
    });
    if (result) {
      const stamp: OptimizationStamp = { ...this.stamp(result, started, undefined, key), baseScenario: scenario, study: clone(study) };
      this.keep('optimization', stamp);
      this.notify('info', result.cancelled ? 'Optimization cancelled: the best point found so far is kept.' : 'Optimization finished.');
    }
  }

  /** The kick of the recovery settings on the lateral gait: judged, with the runs with and without it. */
  async runRecover(): Promise<void> {
    if (!this.kindRuns('recover')) return;
    const { scenario, key } = this.lastValid;
    const lateral = asLateral(scenario);
    const r = this.settings.recover ?? defaultRecoverSettings();
    if (!lateral || !this.checkSettings('recover', () => checkRecoverSettings(r))) return;
    const spec = kickSpec(r);
    const interval = Number(this.settings.trace.interval_s);
    const started = performance.now();
    const result = await this.job('recover', 'Kick recovery', () =>
      runLateralRecover(this.pool, lateral, spec, { stridesAfter: Number(r.after), dt: interval > 0 && interval <= 0.1 ? interval : 0.002 }),
    );
    if (result) this.keep('lateralRecover', this.stamp(result, started, spec, key));
  }

  /** The lateral model's stability regions over two parameters (the analysis of `pronk scan`). */
  async runLateralScan(): Promise<void> {
    if (!this.kindRuns('scan')) return;
    const { scenario, key } = this.lastValid;
    const lateral = asLateral(scenario);
    if (!lateral) return;
    const a = this.settings.lateralScan ?? defaultLateralScanSettings(lateral);
    const axis = (v: { path: unknown; lo: unknown; hi: unknown; n: unknown }) => ({ path: String(v.path ?? ''), lo: num(v.lo), hi: num(v.hi), n: num(v.n) });
    const options: ScanOptions = { x: axis(a.x), y: axis(a.y), samples: 2 };
    if (!this.checkSettings('lateralScan', () => checkScan(scenario, options))) return;
    const started = performance.now();
    const result = await this.job('scan', 'Stability regions of the lateral gait', (signal, progress) =>
      runLateralScan(this.pool, lateral, options, { signal, onProgress: (d, t) => progress(d, t, 'ranges') }),
    );
    if (result) this.keep('lateralScan', this.stamp(result, started, { x: options.x, y: options.y }, key));
  }

  /** The lateral gait's basin over errors of its heading to the body axis and angular velocity (the analysis of `pronk basin`). */
  async runLateralBasin(): Promise<void> {
    if (!this.kindRuns('basin')) return;
    const { scenario, key } = this.lastValid;
    const lateral = asLateral(scenario);
    if (!lateral) return;
    const b = this.settings.lateralBasin ?? defaultLateralBasinSettings(lateral);
    const axis = (a: { lo: unknown; hi: unknown; n: unknown }) => ({ low: num(a.lo), high: num(a.hi), count: num(a.n) });
    const options = { headings: axis(b.headings), rates: axis(b.rates), strides: num(b.strides), tolerance: num(b.tolerance) };
    const { checkLateralBasinRun } = await import('../../core/analysis/lateral-basin.js');
    if (!this.checkSettings('lateralBasin', () => checkLateralBasinRun(options))) return;
    const started = performance.now();
    const result = await this.job('basin', 'Basin of the lateral gait', (signal, progress) =>
      runLateralBasin(this.pool, lateral, options, { signal, onProgress: (d, t) => progress(d, t, 'ranges') }),
    );
    if (result) this.keep('lateralBasin', this.stamp(result, started, options, key));
  }

  /** Monte Carlo over random kicks up to the sizes of the recovery settings (common random numbers by seed). */
  async runRecoverMonteCarlo(): Promise<void> {
    if (!this.kindRuns('recover')) return;
    const { scenario, key } = this.lastValid;
    const lateral = asLateral(scenario);
    const r = this.settings.recover ?? defaultRecoverSettings();
    if (!lateral || !this.checkSettings('recover', () => checkRecoverSettings(r, true))) return;
    const spec: RandomKickSpec = {
      stride: Number(r.stride),
      max_forward_m_per_s: Math.abs(Number(r.forward)),
      max_left_m_per_s: Math.abs(Number(r.left)),
      max_angle_deg: Math.abs(Number(r.angle)),
      max_rate_deg_per_s: Math.abs(Number(r.rate)),
      seed: Number(r.seed),
      rollouts: Number(r.rollouts),
    };
    const started = performance.now();
    const result = await this.job('recoverMC', 'Monte Carlo over kicks', (signal, progress) =>
      runLateralRecoverMonteCarlo(this.pool, lateral, spec, { stridesAfter: Number(r.after) }, { signal, onProgress: (d, t) => progress(d, t, 'ranges') }),
    );
    if (result) this.keep('lateralRecoverMC', this.stamp(result, started, spec, key));
  }

  /** Baseline (the study's start) and optimized policy on the same terrain streams. */
  async runComparison(): Promise<void> {
    const opt = this.results.optimization;
    if (!opt) return;
    // the comparison runs the single-leg analyses: never on a result of another kind
    const reason = viewUnsupported(draftKind(opt.baseScenario), 'compare');
    if (reason) {
      this.notify('error', `${reason[0].toUpperCase()}${reason.slice(1)} (the optimization result is of that model).`);
      return;
    }
    const options = montecarloOptions(this.settings.montecarlo);
    const baseline = opt.baseScenario;
    let candidate: Scenario;
    try {
      candidate = parseScenario(opt.value.scenario);
    } catch (error) {
      this.reportError('Comparison', error);
      return;
    }
    if (!this.checkSettings('montecarlo', () => { runMonteCarloCheck(baseline, options); runMonteCarloCheck(candidate, options); })) return;
    const started = performance.now();
    const mapOptions = { samples: 201, iterations: 30 };
    const result = await this.job('compare', 'Comparison', async (signal, progress) => {
      let done = 0;
      const step = <T>(p: Promise<T>) => p.then((v) => { progress(++done, 6); return v; });
      const [mcA, mcB, mapA, mapB, sdA, sdB] = await Promise.all([
        step(runRobustness(this.pool, baseline, options, { signal })),
        step(runRobustness(this.pool, candidate, options, { signal })),
        step(runReturnMap(this.pool, baseline, mapOptions, { signal })),
        step(runReturnMap(this.pool, candidate, mapOptions, { signal })),
        step(runStepdown(this.pool, baseline, { signal })),
        step(runStepdown(this.pool, candidate, { signal })),
      ]);
      const data: ComparisonData = {
        baseline: { scenario: baseline, montecarlo: mcA, map: mapA, stepdown: sdA },
        candidate: { scenario: candidate, montecarlo: mcB, map: mapB, stepdown: sdB },
        paired: pairSurvival(mcA.rows, mcB.rows),
        options,
      };
      return data;
    });
    if (result) this.keep('compare', this.stamp(result, started, options, opt.scenarioKey));
  }

  /** Copies the optimized parameters into the scenario draft (one undoable step). */
  applyOptimized(): void {
    const opt = this.results.optimization;
    if (!opt) return;
    // a result of another model kind names numbers this scenario has not
    const kind = draftKind(opt.value.scenario);
    const missing = opt.value.parameters.filter((p) => typeof getAt(this.scenarioDraft, p.path) !== 'number');
    if (kind !== draftKind(this.scenarioDraft) || missing.length > 0) {
      this.notify(
        'error',
        `The optimized parameters belong to a ${KIND_NAMES[kind]} scenario` +
          (missing.length ? ` and name ${missing.map((p) => fieldLabel('sc', p.path)).join(', ')}, which the scenario being edited has not` : '') +
          ': open that scenario (or its result file) first.',
      );
      return;
    }
    this.group('Optimized parameters used', () => {
      for (const p of opt.value.parameters) setAt(this.scenarioDraft, p.path, p.value);
    });
    this.notify('info', 'The optimized parameters are now in the scenario. Undo (Ctrl+Z) goes back.');
  }

  openExport(source: 'scenario' | 'result'): void {
    this.exportRequest = { source, n: this.exportRequest.n + 1 };
  }

  /** Diagnostics: makes a worker fail, to see the recovery. */
  crashWorker(): void {
    this.pool.crash(0);
  }
}

/** An optimization result file as the workbench keeps it: its baseline is the start of every parameter. */
export function stampFromResult(result: Json): OptimizationStamp {
  const best = parseCandidateScenario(result.scenario as Json);
  const base = structuredClone(best) as unknown as Json;
  for (const p of (result.parameters ?? []) as { path: string; start: number }[]) setAt(base, p.path, p.start);
  const baseScenario = parseCandidateScenario(base);
  return {
    value: result as never,
    scenarioKey: canonicalJson(baseScenario),
    at: Date.now(),
    seconds: Number((result.provenance as Json | undefined)?.seconds ?? 0),
    baseScenario,
    study: {},
  };
}

/** The recovery settings' kick (KickSpec of core/analysis/recover.ts). */
export function kickSpec(r: NonNullable<Settings['recover']>): KickSpec {
  return {
    stride: Number(r.stride),
    fraction: Number(r.fraction),
    forward_m_per_s: Number(r.forward),
    left_m_per_s: Number(r.left),
    angle_deg: Number(r.angle),
    rate_deg_per_s: Number(r.rate),
  };
}

/** The recovery settings checked, each problem naming its field (recover.stride, recover.left, ...). */
export function checkRecoverSettings(r: NonNullable<Settings['recover']>, monteCarlo = false): void {
  const issues: InputIssue[] = [];
  const check = (key: keyof typeof r, low: number, high: number, integer = false, unit = '') => {
    const v = r[key];
    if (typeof v !== 'number' || !Number.isFinite(v) || v < low || v > high || (integer && !Number.isInteger(v))) {
      issues.push({ path: key, expected: `${integer ? 'an integer' : 'a number'} from ${low} to ${high}${unit ? ` (${unit})` : ''}`, found: v === undefined ? 'nothing' : JSON.stringify(v) });
    }
  };
  check('stride', 0, 1000, true);
  check('fraction', 0, 1);
  check('forward', -1000, 1000, false, 'm/s');
  check('left', -1000, 1000, false, 'm/s');
  check('angle', -180, 180, false, '°');
  check('rate', -1e5, 1e5, false, '°/s');
  check('after', 3, 10000, true);
  if (monteCarlo) {
    check('rollouts', 1, 100000, true);
    check('seed', 0, Number.MAX_SAFE_INTEGER, true);
  }
  if (issues.length) throw new InputError(issues);
}

function runBasinCheck(scenario: Scenario, options: BasinOptions): void {
  basinRunOptions(scenario, options); // throws an InputError naming the option
}

function runMonteCarloCheck(scenario: Scenario, options: RobustnessOptions): void {
  canonicalRobustnessOptions(scenario, options);
}
