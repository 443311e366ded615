/**
 * `factor-triage study DEAL MARKET [MARKET...] [options]`: runs the factor study, writes the study file and the HTML
 * report (atomically) and prints a readable summary (or the study as JSON with --json).
 */
import path from 'node:path';
import type { CliIo } from '../main.ts';
import { EXIT } from '../main.ts';
import { EngineError } from '../../engine/errors.ts';
import {
  runStudy,
  DEFAULT_SETTINGS,
  FACTOR_LABELS,
  type SavedStudy,
  type StudySettings,
  type FactorId,
} from '../../engine/study/index.ts';
import { makeNodeWorkerExecutor } from '../../engine/simulation/runner.node.ts';
import { studyInProcessExecutor } from '../../engine/study/studyExecutor.ts';
import { renderReport, CAUTION } from '../../report/index.ts';
import {
  readFileSync,
  renameSync,
  writeFileSync,
  unlinkSync,
  existsSync,
  statSync,
  mkdirSync,
} from 'node:fs';

// File helpers (also used by verify and diff): one clear message per unreadable input; atomic writes (a temporary
// file in the same folder, then a rename, so a reader never sees half a file).

/** Reads and parses a JSON file; `what` names it in messages (e.g. "deal file"). */
export function readJsonFile(file: string, what: string): unknown {
  if (!existsSync(file))
    throw new EngineError('E_NO_FILE', `cannot read the ${what} ${file}: no such file (check the path)`);
  if (statSync(file).isDirectory())
    throw new EngineError('E_NO_FILE', `the ${what} ${file} is a folder, not a file`);
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new EngineError('E_NO_FILE', `cannot read the ${what} ${file}: ${(e as Error).message}`);
  }
  try {
    return JSON.parse(text) as unknown;
  } catch (e) {
    throw new EngineError('E_BAD_JSON', `the ${what} ${file} is not valid JSON: ${(e as Error).message}`);
  }
}

/** Writes text atomically: temp file in the same folder, then rename over the target. */
export function writeFileAtomic(file: string, text: string): void {
  const dir = path.dirname(path.resolve(file));
  const tmp = path.join(dir, `.${path.basename(file)}.${process.pid}.${Date.now()}.tmp`);
  try {
    mkdirSync(dir, { recursive: true });
    writeFileSync(tmp, text, 'utf8');
    renameSync(tmp, file);
  } catch (e) {
    try {
      if (existsSync(tmp)) unlinkSync(tmp);
    } catch {
      /* the temporary file could not be removed; the target is untouched */
    }
    throw new EngineError('E_WRITE', `cannot write ${file}: ${(e as Error).message}`);
  }
}

export const summary =
  'Run the factor study of a deal on a market: keep, drop or undecided per stochastic factor, with the evidence.';

export const usage = [
  'usage: factor-triage study DEAL MARKET [MORE_MARKETS...] [options]',
  '',
  '  DEAL                 deal file (format factor-triage/deal@1)',
  '  MARKET               market snapshot (format factor-triage/market@1); further snapshots (other dates)',
  '                       measure parameter and verdict stability',
  '',
  '  --paths N            final path count (default 65536; a multiple of --batch)',
  '  --first-paths N      path count at the first look; looks double up to --paths (default 8192)',
  '  --batch N            paths per batch (default 4096)',
  '  --step YEARS         largest simulation step (default 0.25)',
  '  --seed S             run seed: a whole number >= 0 or a word (default factor-triage)',
  '  --alpha A            error rate over all looks and factors (default 0.05)',
  "  --spending K         alpha spending: obf (O'Brien–Fleming type, default) or pocock",
  '  --bp X               materiality threshold in basis points of notional (default 10)',
  '  --amount X           materiality threshold as an amount in the deal currency',
  '  --spread F:W         threshold as a fraction F of a quoted bid–offer width W (deal currency)',
  '  --also FACTOR        simulate a factor the rules call not needed, to confirm them (repeatable):',
  '                       stochVol, domesticRate, foreignRate',
  '  --naive              add factors without refitting (labelled; measures miscalibration too)',
  '  --euler              Heston by full-truncation Euler instead of QE',
  '  --refit-mc           correct the Heston refit under stochastic rates by Monte Carlo of the full model',
  '  --per-equity         break the stochastic-vol factor down per equity (deals on several equities)',
  '  --no-greeks          skip delta, vega and rho',
  '  --no-sweeps          skip the sweeps over unquoted correlations',
  '  --no-local-vol       skip the local-volatility diagnostic',
  '  --aux F              share of --paths for step halving, sweeps, other snapshots (default 0.25)',
  '  --settings FILE      settings as JSON (fields as in the study file); flags override it',
  '  --workers W          worker threads (default 1 = in this process); results do not depend on W',
  '  --out FILE           study file to write (default DEAL_NAME.study.json in the current folder)',
  '  --report FILE        HTML report to write (default next to the study file, .report.html)',
  '  --json               print the study as JSON on stdout instead of the summary',
  '',
  'exit codes: 0 done, 2 bad input (named field and fix), 3 internal error',
].join('\n');

function num(flag: string, v: string | undefined, integer = false): number {
  const x = Number(v);
  if (v === undefined || !Number.isFinite(x) || (integer && !Number.isSafeInteger(x)))
    throw new EngineError(
      'E_USAGE',
      `${flag} needs ${integer ? 'a whole number' : 'a number'} (got ${v === undefined ? 'nothing' : JSON.stringify(v)})`,
    );
  return x;
}

interface Parsed {
  files: string[];
  settings: StudySettings;
  workers: number;
  out: string | null;
  report: string | null;
  json: boolean;
}

/** Parses the command line into settings (exported for tests). */
export function parseStudyArgs(args: string[]): Parsed {
  const files: string[] = [];
  let base: Partial<StudySettings> = {};
  const over: Partial<StudySettings> = {};
  let workers = 1;
  let out: string | null = null;
  let report: string | null = null;
  let json = false;
  const also: FactorId[] = [];
  let greeks = true;
  let sweeps = true;
  for (let i = 0; i < args.length; i++) {
    const a = args[i]!;
    const val = () => {
      const v = args[++i];
      if (v === undefined) throw new EngineError('E_USAGE', `${a} needs a value`);
      return v;
    };
    switch (a) {
      case '--paths':
        over.paths = num(a, val(), true);
        break;
      case '--first-paths':
        over.firstPaths = num(a, val(), true);
        break;
      case '--batch':
        over.batchSize = num(a, val(), true);
        break;
      case '--step':
        over.maxStep = num(a, val());
        break;
      case '--seed': {
        const v = val();
        over.seed = /^\d+$/.test(v) && Number.isSafeInteger(Number(v)) ? Number(v) : v;
        break;
      }
      case '--alpha':
        over.alpha = num(a, val());
        break;
      case '--spending': {
        const v = val();
        if (v !== 'obf' && v !== 'pocock')
          throw new EngineError('E_USAGE', `--spending must be obf or pocock (got ${JSON.stringify(v)})`);
        over.spending = v === 'obf' ? 'obrienFleming' : 'pocock';
        break;
      }
      case '--bp':
        over.threshold = { kind: 'bp', value: num(a, val()) };
        break;
      case '--amount':
        over.threshold = { kind: 'amount', value: num(a, val()) };
        break;
      case '--spread': {
        const v = val();
        const [f, w] = v.split(':');
        over.threshold = {
          kind: 'bidOffer',
          fraction: num('--spread fraction', f),
          width: num('--spread width', w),
        };
        break;
      }
      case '--also': {
        const v = val() as FactorId;
        if (!(v in FACTOR_LABELS))
          throw new EngineError(
            'E_USAGE',
            `--also must name stochVol, domesticRate or foreignRate (got ${JSON.stringify(v)})`,
          );
        also.push(v);
        break;
      }
      case '--naive':
        over.calibration = 'naive';
        break;
      case '--euler':
        over.scheme = 'euler';
        break;
      case '--refit-mc':
        over.hestonRefit = 'monteCarlo';
        break;
      case '--per-equity':
        over.perEquity = true;
        break;
      case '--no-greeks':
        greeks = false;
        break;
      case '--no-sweeps':
        sweeps = false;
        break;
      case '--no-local-vol':
        over.localVol = false;
        break;
      case '--aux':
        over.auxiliaryFraction = num(a, val());
        break;
      case '--settings': {
        const raw = readJsonFile(val(), 'settings file');
        if (!raw || typeof raw !== 'object' || Array.isArray(raw))
          throw new EngineError('E_USAGE', 'the settings file must hold a JSON object of study settings');
        base = raw as Partial<StudySettings>;
        break;
      }
      case '--workers':
        workers = num(a, val(), true);
        if (workers < 1) throw new EngineError('E_USAGE', `--workers must be at least 1 (got ${workers})`);
        break;
      case '--out':
        out = val();
        break;
      case '--report':
        report = val();
        break;
      case '--json':
        json = true;
        break;
      default:
        if (a.startsWith('-'))
          throw new EngineError('E_USAGE', `unknown option ${a} (see factor-triage study --help)`);
        files.push(a);
    }
  }
  const settings: StudySettings = { ...DEFAULT_SETTINGS, ...base, ...over };
  if (also.length) settings.extraCandidates = [...new Set([...(settings.extraCandidates ?? []), ...also])];
  if (!greeks) settings.greeks = null;
  if (!sweeps) settings.sweeps = null;
  if (over.paths !== undefined && over.firstPaths === undefined && settings.firstPaths > settings.paths)
    settings.firstPaths = Math.max(settings.batchSize, Math.min(settings.paths, DEFAULT_SETTINGS.firstPaths));
  return { files, settings, workers, out, report, json };
}

function pad(s: string, n: number): string {
  return s.length >= n ? s : s + ' '.repeat(n - s.length);
}

function f(x: number | null | undefined, digits = 2): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  return x.toLocaleString('en-US', { maximumFractionDigits: digits, minimumFractionDigits: digits });
}

/** Readable summary lines of a study (also used by verify). */
export function summaryLines(s: SavedStudy): string[] {
  const d = s.input.deal;
  const set = s.input.settings;
  const ccy = d.currency;
  const lines = [
    `Factor study: ${d.name}`,
    `market ${s.input.markets[0]!.date}, ${set.paths.toLocaleString('en-US')} paths, seed ${set.seed}, threshold τ = ${f(s.results.tau)} ${ccy}`,
    '',
    `  ${pad('factor', 48)}${pad('rules', 12)}${pad('verdict', 12)}${pad(`Δ (${ccy})`, 14)}${pad('± z·SE', 12)}${pad('budget', 12)}decided at`,
  ];
  for (const v of s.verdicts) {
    const dd = v.decision;
    lines.push(
      `  ${pad(FACTOR_LABELS[v.factor], 48)}${pad(v.status === 'notNeeded' ? 'not needed' : v.status, 12)}${pad(
        v.verdict === 'notNeeded' ? 'not needed' : v.verdict,
        12,
      )}${pad(dd ? f(dd.delta) : '—', 14)}${pad(dd ? f(dd.z * dd.se) : '—', 12)}${pad(dd ? f(dd.budget) : '—', 12)}${
        v.decidedAtLook === null
          ? dd
            ? 'not decided'
            : '—'
          : `${s.results.looks[v.decidedAtLook]!.paths.toLocaleString('en-US')} paths`
      }`,
    );
  }
  // What the budget column is made of, per decided factor (older study files carry no parts).
  const parts = s.results.budgetParts;
  if (parts)
    for (const v of s.verdicts) {
      const b = parts[v.factor];
      if (!b || !v.decision) continue;
      lines.push(
        `  budget of ${FACTOR_LABELS[v.factor].split(' (')[0]}: step halving ${f(b.stepHalving)}, calibration ${f(b.calibration)}, repricing ${f(b.repricing ?? 0)}${b.exerciseGap === null ? '' : `, exercise gap ${f(b.exerciseGap)}`} ${ccy}`,
      );
    }
  // Undecided factors: what would decide them (older study files carry none).
  for (const v of s.verdicts) {
    const w = s.results.whatWouldDecide?.[v.factor];
    if (v.verdict === 'undecided' && w)
      lines.push(`  ${FACTOR_LABELS[v.factor].split(' (')[0]} is undecided: ${w.summary}`);
  }
  lines.push('', `Recommended model: ${s.recommended.summary}`);
  const j = s.results.joint;
  if (j && j.outcome !== 'nothingDropped')
    lines.push(
      `Joint check without ${j.dropped.join(', ')}: difference ${f(j.difference)} ± ${f(j.z * j.se)} ${ccy}, budget ${f(j.budget)}: ${j.outcome}`,
    );
  const lv = s.results.localVol;
  if (lv)
    lines.push(
      `Local-vol split of the stochastic-vol effect: smile ${f(lv.smile.value)} ± ${f(lv.smile.se)}, vol dynamics ${f(lv.dynamics.value)} ± ${f(lv.dynamics.se)} ${ccy}`,
    );
  if (s.results.greekVerdicts.length)
    lines.push(
      `Hedge ratios: ${['delta', 'vega', 'rho']
        .map((g) => {
          const rows = s.results.greekVerdicts.filter((x) => x.greek === g);
          return rows.length ? `${g} ${rows.map((x) => `${x.factor} ${x.decision.verdict}`).join(', ')}` : '';
        })
        .filter(Boolean)
        .join('; ')}`,
    );
  const sweeps = s.results.sweeps.filter((x) => x.priceMovesMaterially);
  for (const sw of sweeps)
    lines.push(
      `Correlation ${sw.pair}: the price moves by ${f(sw.band)} ${ccy} across ${sw.range[0]} … ${sw.range[1]} (more than τ)`,
    );
  if (s.warnings.length) lines.push(`${s.warnings.length} warning(s); see the report.`);
  return lines;
}

function defaultOut(dealFile: string, deal: unknown): string {
  const name = (deal as { name?: unknown })?.name;
  const stem = path.basename(dealFile).replace(/\.json$/i, '') || (typeof name === 'string' ? name : 'deal');
  return `${stem}.study.json`;
}

export async function run(args: string[], io: CliIo): Promise<number> {
  const p = parseStudyArgs(args);
  if (p.files.length < 2) {
    io.err('factor-triage study: give a deal file and at least one market file (factor-triage study --help)');
    return EXIT.badInput;
  }
  const [dealFile, ...marketFiles] = p.files as [string, ...string[]];
  const deal = readJsonFile(dealFile, 'deal file');
  const markets = marketFiles.map((m) => readJsonFile(m, 'market file'));
  const outFile = p.out ?? defaultOut(dealFile, deal);
  const reportFile = p.report ?? outFile.replace(/(\.study)?\.json$/i, '') + '.report.html';
  const saved = await runStudy(
    { deal: deal as never, markets: markets as never, settings: p.settings },
    {
      workers: p.workers,
      makeExecutor: (w) => (w > 1 ? makeNodeWorkerExecutor(w) : studyInProcessExecutor()),
      onProgress: (pr) => io.progress(pr.fraction, `study: ${pr.stage}`),
    },
  );
  writeFileAtomic(outFile, JSON.stringify(saved, null, 1) + '\n');
  writeFileAtomic(reportFile, renderReport(saved));
  if (p.json) io.out(JSON.stringify(saved));
  else {
    for (const l of summaryLines(saved)) io.out(l);
    io.out('');
    io.out(`Study file:  ${outFile}`);
    io.out(`Report:      ${reportFile}`);
    io.out(`Re-run it with: factor-triage verify ${outFile}`);
    io.out('');
    io.out(CAUTION);
  }
  return EXIT.ok;
}
