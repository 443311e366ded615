/**
 * The one typed request/reply protocol between the user interface and the engine. Every call is
 * `method name → arguments → result`, listed once in {@link EngineMethods}; the worker serves it
 * (see `serveEngine`), the UI calls it (see `createEngineClient`). Messages are plain,
 * structured-cloneable data; errors cross as {@link ApiError} with a stable code.
 */
import type { FieldIssue } from '../errors.ts';
import type { DealCheck } from '../deal/compileDeal.ts';
import type { DealAnalysis } from '../deal/types.ts';
import type { RuleSettings, RulesResult } from '../study/rules.ts';
import type { CheckResult, ExpressionContext } from '../deal/checkExpression.ts';
import type { SavedStudy, StudyInput } from '../study/types.ts';
import type { StudyDiff } from '../study/diff.ts';
import type { StabilityReport } from '../calibration/calibrationStability.ts';
import type { MarketSnapshot } from '../market/types.ts';

/** Version of the message format; a client and a server of different versions refuse each other. */
export const PROTOCOL_VERSION = 1;

/** Outcome of checking a correlation matrix for use in a simulation. */
export interface CorrelationCheck {
  /** Symmetric, unit diagonal, entries in [−1, 1], positive semi-definite (to `tolerance`). */
  valid: boolean;
  /** Smallest eigenvalue (negative: the matrix is not a correlation matrix). */
  minEigenvalue: number;
  /** Problems by cell, e.g. field `correlation.matrix[0][2]`. */
  issues: FieldIssue[];
  /** Nearest valid correlation matrix (Higham 2002), offered when the input is not PSD; never applied silently. */
  nearest: { matrix: number[][]; distance: number; converged: boolean } | null;
}

/** A deal checked, compiled when valid, and analysed for the rules. */
export interface DealReview extends DealCheck {
  /** What the study's rules read in the deal; null while the deal has errors. */
  analysis: DealAnalysis | null;
  /** The rules' finding per factor group (required, candidate, not needed) with reasons; null while the deal has errors. */
  rules: RulesResult | null;
}

/** A market snapshot checked: every error and warning, by field. */
export interface MarketCheck {
  valid: boolean;
  issues: FieldIssue[];
}

/** A study file read back: the parsed study and whether its hash still matches its content. */
export interface OpenedStudy {
  study: SavedStudy;
  hash: { ok: boolean; stored: string; computed: string };
}

/** Outcome of re-running a saved study. */
export interface VerifyOutcome {
  /** The re-run reproduced every result bit for bit (timings excepted) and the hash matched. */
  identical: boolean;
  /** The stored hash matches the file's content (false: the file was edited after saving). */
  hashOk: boolean;
  /** The first field that differs, with both values; null when identical. */
  difference: { field: string; saved: unknown; rerun: unknown } | null;
  /** One sentence for people. */
  message: string;
}

/**
 * The method map. Each entry: `args` (what the caller sends) and `result` (what comes back).
 * Long methods report progress and honour cancellation (see {@link ProgressReport}).
 */
export interface EngineMethods {
  /** Protocol version and the methods this engine build serves. */
  'engine.info': { args: Record<string, never>; result: { protocol: number; methods: EngineMethod[] } };
  /** Checks a whole deal file (raw JSON value); every problem names its field, expression errors carry positions. */
  'deal.check': { args: { deal: unknown; rules?: RuleSettings }; result: DealReview };
  /** Checks a whole market snapshot (raw JSON value): schema and meaning, errors and warnings by field. */
  'market.check': { args: { snapshot: unknown }; result: MarketCheck };
  /** Checks one payoff expression against the names the deal declares (check-as-you-type). */
  'deal.checkExpression': { args: { text: string; context: ExpressionContext }; result: CheckResult };
  /** Checks a correlation matrix and offers the nearest valid one when it is not positive semi-definite. */
  'market.checkCorrelation': { args: { names: string[]; matrix: number[][] }; result: CorrelationCheck };
  /** Calibrates Heston per equity and Hull–White per currency on every snapshot and reports each parameter's path. */
  'calibration.stability': {
    args: { snapshots: MarketSnapshot[]; equities: string[]; currencies: string[] };
    result: StabilityReport;
  };
  /** Parses a study file's text: schema check (refused with the reason) and the hash check. */
  'study.open': { args: { text: string }; result: OpenedStudy };
  /** Runs a study (long: progress, cancellable). */
  'study.run': { args: { input: StudyInput }; result: SavedStudy };
  /** Re-runs a saved study and compares it bit for bit (long: progress, cancellable). */
  'study.verify': { args: { study: SavedStudy }; result: VerifyOutcome };
  /** What changed between two studies: inputs, settings, verdicts, results. */
  'study.diff': { args: { a: SavedStudy; b: SavedStudy }; result: StudyDiff };
  /** The self-contained HTML report of a saved study (served by the app's worker, which may use src/report). */
  'report.render': { args: { study: SavedStudy }; result: { html: string } };
}

export type EngineMethod = keyof EngineMethods;
export type ArgsOf<M extends EngineMethod> = EngineMethods[M]['args'];
export type ResultOf<M extends EngineMethod> = EngineMethods[M]['result'];

/** Stable error codes of the protocol itself (engine errors keep their own codes, e.g. `E_NOT_PSD`). */
export const API_ERROR_CODES = {
  /** The caller cancelled the request. */
  cancelled: 'E_CANCELLED',
  /** The method is not served by this engine build. */
  unknownMethod: 'E_UNKNOWN_METHOD',
  /** The message was not a well-formed request. */
  badRequest: 'E_BAD_REQUEST',
  /** The worker failed to start or stopped. */
  workerFailed: 'E_WORKER_FAILED',
  /** A failure inside the engine that is not about the input. */
  internal: 'E_INTERNAL',
} as const;

/** An error crossing the boundary: plain data, the UI owns the wording around it. */
export interface ApiError {
  code: string;
  message: string;
  issues: FieldIssue[];
}

/** Progress of a long request: a fraction in [0, 1] and the stage it is in. */
export interface ProgressReport {
  fraction: number;
  stage: string;
  detail?: string;
}

/** UI → engine. */
export type ClientMessage =
  | { v: typeof PROTOCOL_VERSION; kind: 'request'; id: number; method: string; args: unknown }
  | { v: typeof PROTOCOL_VERSION; kind: 'cancel'; id: number };

/** Engine → UI. */
export type ServerMessage =
  | { v: typeof PROTOCOL_VERSION; kind: 'result'; id: number; result: unknown }
  | { v: typeof PROTOCOL_VERSION; kind: 'error'; id: number; error: ApiError }
  | { v: typeof PROTOCOL_VERSION; kind: 'progress'; id: number; progress: ProgressReport };

/** The smallest part of a Worker / MessagePort / worker global scope the protocol needs. */
export interface MessageEndpoint {
  postMessage(message: unknown): void;
  addEventListener(type: 'message', listener: (ev: { data: unknown }) => void): void;
  removeEventListener(type: 'message', listener: (ev: { data: unknown }) => void): void;
}

/** What a handler gets besides its arguments. */
export interface HandlerContext {
  /** Aborted when the caller cancels. */
  signal: AbortSignal;
  /** Reports progress to the caller (throttled by the server). */
  progress(p: ProgressReport): void;
}

/** Implementation of every method (or of a subset: unserved methods answer `E_UNKNOWN_METHOD`). */
export type EngineHandlers = {
  [M in EngineMethod]: (args: ArgsOf<M>, ctx: HandlerContext) => Promise<ResultOf<M>> | ResultOf<M>;
};
