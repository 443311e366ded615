/**
 * `verifyStudy`: checks a saved study's hash (edits after saving) and re-runs it from its own inputs, settings and
 * seed; the re-run must be bit-identical to the file except for timings (and so its hash).
 */
import { checkStudyHash, comparablePart, firstDifference } from './savedStudy.ts';
import { runStudy, type RunStudyOptions } from './study.ts';
import type { SavedStudy } from './types.ts';

/** Outcome of a verification. */
export interface VerifyResult {
  /** True when the hash matches and the re-run is bit-identical. */
  ok: boolean;
  /** The stored hash does not match the content: the file was edited after it was saved. */
  edited: boolean;
  hash: { stored: string; computed: string };
  /** Null when the re-run was not attempted (edited file) or is identical. */
  firstDifference: { field: string; saved: unknown; rerun: unknown } | null;
  /** One sentence for people. */
  message: string;
  /** Seconds the re-run took. */
  seconds: number;
}

/** Whether a study was written before its budget recorded the repricing part (and its parts at all). */
export function predatesRepricing(s: SavedStudy): boolean {
  return s.results.budgetParts === undefined;
}

/**
 * What a re-run records that the saved study lacks because an older version wrote it: what would decide its
 * undecided factors, the step check of the local-vol split, the variance–rate sweeps under Euler. Empty when none.
 */
export function missingDiagnostics(saved: SavedStudy, rerun: SavedStudy): string[] {
  const out: string[] = [];
  if (rerun.results.whatWouldDecide && !saved.results.whatWouldDecide)
    out.push('what would decide each undecided factor (also in its reason)');
  if (rerun.results.localVol?.stepHalving && saved.results.localVol && !saved.results.localVol.stepHalving)
    out.push('the step-halving check of the local-vol split');
  const euler = (s: SavedStudy) => s.results.sweeps.some((w) => w.scheme === 'euler');
  if (euler(rerun) && !euler(saved)) out.push('the variance–rate correlation sweeps under Euler');
  return out;
}

function show(v: unknown): string {
  const s = JSON.stringify(v);
  return s === undefined ? String(v) : s.length > 120 ? s.slice(0, 117) + '...' : s;
}

/** Verifies a study; `opts` as for runStudy (a different worker count must give the same result). */
export async function verifyStudy(saved: SavedStudy, opts: RunStudyOptions = {}): Promise<VerifyResult> {
  const h = checkStudyHash(saved);
  if (!h.ok)
    return {
      ok: false,
      edited: true,
      hash: h,
      firstDifference: null,
      message: `the study file was changed after it was saved: its content hash ${h.computed.slice(0, 16)}… does not match the stored ${h.stored.slice(0, 16)}…; re-run the study to obtain a trustworthy file`,
      seconds: 0,
    };
  const t0 = typeof performance !== 'undefined' ? performance.now() : Date.now();
  const again = await runStudy(saved.input, opts);
  const seconds = ((typeof performance !== 'undefined' ? performance.now() : Date.now()) - t0) / 1000;
  const d = firstDifference(comparablePart(saved), comparablePart(again));
  if (d)
    return {
      ok: false,
      edited: false,
      hash: h,
      firstDifference: { field: d.field, saved: d.a, rerun: d.b },
      message: `the re-run differs from the saved study first at ${d.field}: saved ${show(d.a)}, re-run ${show(d.b)}${
        saved.tool.version !== again.tool.version
          ? ` (saved by version ${saved.tool.version}, re-run by ${again.tool.version})`
          : ''
      }${
        predatesRepricing(saved) && !predatesRepricing(again)
          ? '; the saved study predates the repricing part of the error budget (each variant’s Monte Carlo repricing error), which this version adds, so budgets and verdicts can differ'
          : ''
      }${
        missingDiagnostics(saved, again).length
          ? `; the saved study predates ${missingDiagnostics(saved, again).join(', ')}, which this version records`
          : ''
      }`,
      seconds,
    };
  return {
    ok: true,
    edited: false,
    hash: h,
    firstDifference: null,
    message: 'the re-run is bit-identical to the saved study (timings aside) and the file is unedited',
    seconds,
  };
}
