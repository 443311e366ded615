/**
 * `factor-triage calibrate MARKET_FILE [MORE_FILES...] [options]`: calibrates the model ladder with the study's own
 * assembly and prints its fit reports (readable tables, or JSON with --json). With --deal the ladder is the one a
 * study of that deal simulates on the same market; without it the basis is the snapshot alone. With several files
 * (a series of dates) it also prints each parameter's stability across them.
 */
import { readFile } from 'node:fs/promises';
import type { CliIo } from '../main.ts';
import { EXIT } from '../main.ts';
import { EngineError } from '../../engine/errors.ts';
import { parseSnapshotText } from '../../engine/market/snapshot.ts';
import { makeCurve } from '../../engine/market/curve.ts';
import type { MarketSnapshot } from '../../engine/market/types.ts';
import { analyseDeal, compileDeal } from '../../engine/deal/index.ts';
import {
  calibrateLocalVol,
  calibrationStability,
  correlationRange,
  type LocalVolCalibration,
  type StabilityReport,
} from '../../engine/calibration/index.ts';
import {
  calibrateLadder,
  checkSettings,
  ladderFactors,
  snapshotLadderBasis,
  studyLadderRequest,
  DEFAULT_SETTINGS,
  FACTOR_IDS,
  FACTOR_LABELS,
  type CalibratedLadder,
  type FactorId,
  type LadderBasis,
  type LadderRequest,
  type StudySettings,
} from '../../engine/study/index.ts';
import { readJsonFile } from './study.ts';

export const summary =
  'Calibrate the model ladder a study simulates (of a deal, or of a snapshot alone) and print the fit reports.';
export const usage = [
  'usage: factor-triage calibrate MARKET_FILE [MORE_FILES...] [options]',
  '',
  'The ladder is assembled exactly as the study assembles it: same variants, instruments, refits and parameters.',
  '',
  '  MARKET_FILE          a market snapshot (schema "factor-triage/market@1"); several files: a series of dates,',
  "                       each calibrated the same way, with every parameter's stability across them",
  '  --deal FILE          calibrate the ladder a study of this deal (format factor-triage/deal@1) simulates: the',
  "                       deal's rules choose the candidate and required factors, its last date the expiries and",
  '                       rate quotes',
  '  --settings FILE      study settings as JSON (fields as in the study file, as for factor-triage study); the',
  '                       ladder reads calibration, scheme, calibrationStrikes, hestonRefit, rules, extraCandidates',
  '                       and, for the monte-carlo refit, seed, paths, batchSize, auxiliaryFraction, maxStep',
  '  --also FACTOR        with --deal: also a candidate where the rules say not needed (repeatable):',
  '                       stochVol, domesticRate, foreignRate',
  '  --refit MODE         Heston refit under stochastic rates: analytic (H1-HW, default) or monte-carlo',
  '  --naive              add rate factors without refitting the equity (labelled; measures miscalibration too)',
  '  --euler              Heston by full-truncation Euler in the variants (QE by default)',
  "  --local-vol          also fit the SVI surface and Dupire local vol per equity (the study's diagnostic)",
  '  --json               print the reports as JSON (format factor-triage/calibration@2)',
  '  --hw constant        accepted as before; the ladder fits a constant Hull–White σ (piecewise is not offered)',
  '',
  'Without --deal the basis is the snapshot alone: every equity of the snapshot (or each --equity), paid in the',
  "snapshot's domestic currency; the currencies are the domestic one and the equities'; every quoted expiry and",
  'every rate quote is a calibration instrument; the candidates come from --factors and no factor is required.',
  '  --equity NAME        calibrate this equity (repeatable; default every equity of the snapshot)',
  '  --factors LIST       candidate factors, comma separated from vol, dom, for (default vol,dom,for; for counts',
  '                       only when an equity is quoted in a foreign currency)',
  '  --paths N            paths of the monte-carlo refit (default: as a study with the settings)',
  "  --seed S             seed of the refit's own random stream (default: as a study with the settings)",
  '',
  'exit codes: 0 done, 2 bad input (named field and fix), 3 internal error',
].join('\n');

export const CALIBRATION_FORMAT = 'factor-triage/calibration@2';
const CAUTION =
  "Calibration output informs pricing decisions; it is not investment advice. Model choice remains subject to your firm's model-risk policy and independent validation.";

const FACTOR_WORDS: Record<string, FactorId> = { vol: 'stochVol', dom: 'domesticRate', for: 'foreignRate' };

interface Options {
  json: boolean;
  files: string[];
  deal: string | null;
  settingsFile: string | null;
  also: FactorId[];
  equities: string[];
  factors: FactorId[] | null;
  refit: 'analytic' | 'monte-carlo' | null;
  naive: boolean;
  euler: boolean;
  paths: number | null;
  seed: string | null;
  localVol: boolean;
}

function parseArgs(args: string[]): Options | string {
  const o: Options = {
    json: false,
    files: [],
    deal: null,
    settingsFile: null,
    also: [],
    equities: [],
    factors: null,
    refit: null,
    naive: false,
    euler: false,
    paths: null,
    seed: null,
    localVol: false,
  };
  for (let i = 0; i < args.length; i++) {
    const a = args[i]!;
    const value = () => {
      const v = args[++i];
      if (v === undefined || v.startsWith('--')) throw new Error(`${a} needs a value`);
      return v;
    };
    try {
      if (a === '--json') o.json = true;
      else if (a === '--local-vol') o.localVol = true;
      else if (a === '--naive') o.naive = true;
      else if (a === '--euler') o.euler = true;
      else if (a === '--deal') o.deal = value();
      else if (a === '--settings') o.settingsFile = value();
      else if (a === '--equity') o.equities.push(value());
      else if (a === '--also') {
        const v = value();
        if (!(v in FACTOR_LABELS))
          return `--also must name stochVol, domesticRate or foreignRate (got "${v}")`;
        o.also.push(v as FactorId);
      } else if (a === '--factors') {
        const list = value()
          .split(',')
          .map((s) => s.trim());
        const bad = list.filter((s) => !(s in FACTOR_WORDS));
        if (bad.length) return `--factors: unknown factor "${bad[0]}"; use vol, dom, for`;
        o.factors = list.map((s) => FACTOR_WORDS[s]!);
      } else if (a === '--refit') {
        const v = value();
        if (v !== 'analytic' && v !== 'monte-carlo')
          return `--refit must be analytic or monte-carlo (got "${v}")`;
        o.refit = v;
      } else if (a === '--paths') {
        const v = Number(value());
        if (!(Number.isSafeInteger(v) && v >= 1000))
          return `--paths must be a whole number ≥ 1000 (got "${args[i]}")`;
        o.paths = v;
      } else if (a === '--seed') o.seed = value();
      else if (a === '--hw') {
        const v = value();
        if (v === 'piecewise')
          return '--hw piecewise is not offered: the ladder a study simulates fits a constant Hull–White σ; drop --hw';
        if (v !== 'constant') return `--hw accepts only constant (got "${v}"); drop --hw`;
      } else if (a.startsWith('-')) return `unknown option ${a}; see factor-triage calibrate --help`;
      else o.files.push(a);
    } catch (e) {
      return (e as Error).message;
    }
  }
  if (o.files.length === 0) return 'give a market file (usage: factor-triage calibrate MARKET_FILE [--json])';
  if (o.deal !== null) {
    const clash = (
      [
        ['--equity', o.equities.length > 0, 'the deal names its equities'],
        [
          '--factors',
          o.factors !== null,
          'the deal’s rules choose the candidates; add one with --also FACTOR',
        ],
        [
          '--paths',
          o.paths !== null,
          'the refit’s paths follow the study settings: set paths in --settings FILE',
        ],
        [
          '--seed',
          o.seed !== null,
          'the refit’s seed follows the study settings: set seed in --settings FILE',
        ],
      ] as const
    ).find((c) => c[1]);
    if (clash) return `${clash[0]} does not combine with --deal: ${clash[2]}`;
  } else if (o.also.length) return '--also needs --deal (without a deal, list the candidates with --factors)';
  return o;
}

/** Study settings from the defaults, the settings file and the flags (validated as the study validates them). */
function settingsOf(o: Options): StudySettings {
  let base: Partial<StudySettings> = {};
  if (o.settingsFile !== null) {
    const raw = readJsonFile(o.settingsFile, 'settings file');
    if (!raw || typeof raw !== 'object' || Array.isArray(raw))
      throw new EngineError('E_USAGE', 'the settings file must hold a JSON object of study settings');
    base = raw as Partial<StudySettings>;
  }
  const s: StudySettings = { ...DEFAULT_SETTINGS, ...base };
  if (o.refit) s.hestonRefit = o.refit === 'monte-carlo' ? 'monteCarlo' : 'analytic';
  if (o.naive) s.calibration = 'naive';
  if (o.euler) s.scheme = 'euler';
  if (o.also.length) s.extraCandidates = [...new Set([...(s.extraCandidates ?? []), ...o.also])];
  return checkSettings(s);
}

/** What the ladder is built on, for the output. */
interface Basis {
  kind: 'deal' | 'snapshot';
  deal: { file: string; name: string } | null;
  analysis: LadderBasis;
  candidates: FactorId[];
  required: FactorId[];
  notes: string[];
}

const f = (x: number, d = 4) => (Number.isFinite(x) ? x.toFixed(d) : String(x));
const pad = (s: string, n: number) => (s.length >= n ? s : s + ' '.repeat(n - s.length));
const lpad = (s: string, n: number) => (s.length >= n ? s : ' '.repeat(n - s.length) + s);

function table(head: string[], rows: string[][]): string[] {
  const w = head.map((h, j) => Math.max(h.length, ...rows.map((r) => (r[j] ?? '').length)));
  const line = (r: string[]) => r.map((c, j) => (j === 0 ? pad(c, w[j]!) : lpad(c, w[j]!))).join('  ');
  return [line(head), w.map((n) => '-'.repeat(n)).join('  '), ...rows.map(line)];
}

function render(
  snapshot: MarketSnapshot,
  L: CalibratedLadder,
  basis: Basis,
  req: LadderRequest,
  localVol: Record<string, LocalVolCalibration>,
  io: CliIo,
): void {
  const title = snapshot.name ?? 'market';
  io.out(
    `${title.includes(snapshot.date) ? title : `${title} — ${snapshot.date}`}, numeraire ${snapshot.domestic}`,
  );
  const a = basis.analysis;
  const names = (fs: FactorId[]) => (fs.length ? fs.map((x) => FACTOR_LABELS[x]).join(', ') : 'none');
  io.out(
    basis.deal
      ? `Ladder of the study of deal "${basis.deal.name}" (${basis.deal.file}): paid in ${a.currency}, last date ${f(a.lastTime, 3)} years`
      : `Ladder of the snapshot alone: equities ${a.equities.map((e) => e.marketName).join(', ') || 'none'}, paid in ${a.currency}, every quote to ${f(a.lastTime, 3)} years`,
  );
  io.out(
    `  candidates: ${names(basis.candidates)}; required: ${names(basis.required)}; calibration ${req.mode}; Heston scheme ${req.scheme}${req.hestonMcRefit ? `; Heston refit corrected by Monte Carlo (${req.hestonMcRefit.paths} paths, seed "${req.hestonMcRefit.seed}")` : ''}`,
  );
  for (const n of basis.notes) io.out(`  note: ${n}`);
  io.out('');
  for (const [c, h] of Object.entries(L.reports.hullWhite)) {
    const p = h.params;
    const sig =
      typeof p.sigma === 'number'
        ? `σ = ${f(p.sigma * 1e4, 2)} bp (± ${f((h.fit.standardErrors.sigma ?? NaN) * 1e4, 2)})`
        : `σ pieces = ${p.sigma.map((s) => f(s * 1e4, 1)).join(', ')} bp`;
    io.out(`Hull–White ${c}: a = ${f(p.a)} (± ${f(h.fit.standardErrors.a ?? NaN)}), ${sig}`);
    io.out(
      `  fit RMSE ${f(h.rmseVol, 3)} ${h.volUnit}, stop: ${h.fit.stopReason}, ${h.fit.evaluations} evaluations, condition ${f(h.fit.conditionNumber, 1)}, ${f(h.seconds * 1e3, 1)} ms${h.ok ? '' : '  ** FIT NOT ACCEPTED **'}`,
    );
    for (const l of table(
      ['instrument', 'expiry', 'tenor', 'market vol', 'model vol', `error (${h.volUnit})`],
      h.rows.map((r) => [
        r.instrument,
        f(r.expiry, 2),
        f(r.tenor, 2),
        f(r.marketVol, 5),
        f(r.modelVol, 5),
        f(r.volError, 3),
      ]),
    ))
      io.out('  ' + l);
    io.out('');
  }
  for (const [name, rep] of Object.entries(L.reports.heston)) {
    const p = rep.params;
    const se = rep.fit.standardErrors;
    io.out(
      `Heston ${name} (deterministic rates; residuals: vega-weighted price errors ≈ implied-vol errors)`,
    );
    for (const l of table(
      ['parameter', 'value', 'std error', 'start spread min', 'max'],
      (['v0', 'kappa', 'theta', 'sigma', 'rho'] as const).map((k) => [
        k,
        f(p[k], 5),
        f(se[k] ?? NaN, 5),
        f(rep.spread[k]?.min ?? NaN, 5),
        f(rep.spread[k]?.max ?? NaN, 5),
      ]),
    ))
      io.out('  ' + l);
    io.out(
      `  RMSE ${f(rep.rmseVolPoints, 3)} vol points, max ${f(rep.maxAbsVolPoints, 3)}; Feller ratio 2κθ/σ² = ${f(rep.feller.ratio, 3)} (${rep.feller.satisfied ? 'met' : 'not met: variance can reach 0'}); stop: ${rep.fit.stopReason}; condition ${f(rep.fit.conditionNumber, 1)}; ${rep.starts.length} start${rep.starts.length === 1 ? '' : 's'} run${rep.skippedStarts?.starts.length ? ` (${rep.skippedStarts.starts.length} skipped: a good fit came first)` : ''}; ${f(rep.seconds * 1e3, 0)} ms${rep.ok ? '' : '  ** FIT NOT ACCEPTED **'}`,
    );
    const worst = rep.rows
      .slice()
      .sort((x, y) => Math.abs(y.volErrorPoints) - Math.abs(x.volErrorPoints))
      .slice(0, 5);
    io.out('  largest errors:');
    for (const l of table(
      ['expiry', 'strike', 'market vol', 'model vol', 'error (vol pts)', 'price error'],
      worst.map((r) => [
        f(r.expiry, 2),
        f(r.strike, 2),
        f(r.marketVol, 4),
        f(r.modelVol, 4),
        f(r.volErrorPoints, 3),
        f(r.priceError, 4),
      ]),
    ))
      io.out('    ' + l);
    io.out('');
  }
  io.out(
    'Ladder: every variant fitted to the same instruments (the variants a study of this basis simulates)',
  );
  for (const l of table(
    ['variant', 'models', 'char. function', 'calib. ms', 'RMSE vol pts', 'max vol pts', 'status'],
    L.variants.map((v) => [
      v.id,
      Object.entries(L.reports.variants[v.id]?.equities ?? {})
        .map(([n, r]) => `${n}:${r.model}`)
        .join(' '),
      v.calibration.characteristicFunction,
      f(v.calibration.seconds * 1e3, 1),
      f(v.calibration.rmseVol * 100, 3),
      f(v.calibration.maxAbsVolError * 100, 3),
      L.reports.variants[v.id]?.ok ? 'ok' : 'NOT CONVERGED / OUT OF TOLERANCE',
    ]),
  ))
    io.out('  ' + l);
  // Heston parameters of every variant that refits them under stochastic rates (the deterministic fit is above).
  for (const v of L.variants)
    for (const e of v.spec.equities) {
      const r = L.reports.variants[v.id]?.equities[e.name];
      if (e.dynamics.kind !== 'heston' || !r || r.model === 'heston') continue;
      const p = e.dynamics;
      const its = (r.refit?.iterations ?? [])
        .map(
          (i) =>
            `check ${i.iteration}: max error ${f(i.maxErrorPoints, 3)} (MC SE ≤ ${f(i.maxSePoints, 3)}), gap ${f(i.maxGapPoints, 3)}`,
        )
        .join('; ');
      io.out(
        `  ${v.id} ${e.name}: v0 ${f(p.v0, 5)} κ ${f(p.kappa, 4)} θ ${f(p.theta, 5)} σ ${f(p.sigma, 4)} ρ ${f(p.rho, 4)} [${r.refit ? r.refit.status : r.model}]${its ? ' — ' + its : ''}`,
      );
    }
  const base = L.variants[0]?.spec;
  for (const x of base?.fx ?? []) {
    io.out('');
    const n = base!.correlation.names;
    const q = base!.equities
      .filter((e) => e.currency === x.foreign)
      .map((e) => {
        const i = n.indexOf(`eq:${e.name}`);
        const j = n.indexOf(`fx:${x.name}`);
        const rho = i >= 0 && j >= 0 ? base!.correlation.matrix[i]![j]! : 0;
        const range = correlationRange(snapshot, `eq:${e.name}`, `fx:${x.name}`);
        return `ρ(${e.name}, ${x.name}) = ${f(rho, 2)}${range ? ` (plausible ${range[0]} … ${range[1]})` : ''}`;
      })
      .join('; ');
    io.out(
      `FX ${x.name}: spot ${x.spot}, lognormal vol ${f(x.vol * 100, 2)}% in every variant; quanto correlation is an input${q ? `: ${q}` : ''}`,
    );
  }
  for (const [n, lv] of Object.entries(localVol)) {
    io.out('');
    io.out(
      `Local vol ${n}: SVI slices RMSE ${lv.surface.slices.map((s) => f(s.rmseVolPoints, 3)).join(', ')} vol points; ${lv.dynamics.times.length} × ${lv.dynamics.logK.length} grid; ${lv.flooredCells} floored cells`,
    );
  }
  const all = [...L.warnings, ...L.variants.flatMap((v) => v.calibration.warnings)];
  if (all.length) {
    io.out('');
    io.out('Warnings:');
    for (const w of new Set(all)) io.out(`  ${w}`);
  }
}

function renderStability(S: StabilityReport, io: CliIo): void {
  io.out('');
  io.out(`Parameter stability over ${S.dates.length} dates (${S.dates[0]} … ${S.dates[S.dates.length - 1]})`);
  for (const l of table(
    ['model', 'parameter', ...S.dates.map((d) => d.slice(5)), 'CV', 'max |Δ|', 'mean SE', 'cond', 'fit RMSE'],
    S.paths.map((p) => [
      p.model,
      p.parameter,
      ...S.dates.map((d) => {
        const i = p.dates.indexOf(d);
        return i >= 0 ? f(p.values[i]!, 5) : '—';
      }),
      f(p.coefficientOfVariation, 3),
      f(Math.max(...p.changes.map(Math.abs)), 5),
      f(p.standardErrors.reduce((s, x) => s + x, 0) / p.standardErrors.length, 5),
      f(Math.max(...p.conditionNumbers), 1),
      f(Math.max(...p.fitRmse), 3),
    ]),
  ))
    io.out('  ' + l);
}

async function readSnapshot(file: string, io: CliIo): Promise<MarketSnapshot | null> {
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    io.err(
      `factor-triage calibrate: cannot read ${file}${code === 'ENOENT' ? ': no such file' : code ? ` (${code})` : ''}`,
    );
    return null;
  }
  const { snapshot, warnings } = parseSnapshotText(text, file);
  for (const w of warnings) io.err(`${file}: warning: ${w.message}`);
  return snapshot;
}

export async function run(args: string[], io: CliIo): Promise<number> {
  const o = parseArgs(args);
  if (typeof o === 'string') {
    io.err(`factor-triage calibrate: ${o}`);
    return EXIT.badInput;
  }
  const settings = settingsOf(o);
  const snapshots: MarketSnapshot[] = [];
  for (const file of o.files) {
    const s = await readSnapshot(file, io);
    if (!s) return EXIT.badInput;
    snapshots.push(s);
  }
  const snapshot = snapshots[0]!;
  let basis: Basis;
  if (o.deal !== null) {
    // The deal as the study reads it: compiled, analysed, and its candidate and required factors from the rules.
    const raw = readJsonFile(o.deal, 'deal file');
    const analysis = analyseDeal(compileDeal(raw as never));
    const { candidates, required } = ladderFactors(analysis, settings);
    basis = {
      kind: 'deal',
      deal: { file: o.deal, name: analysis.name },
      analysis,
      candidates,
      required,
      notes: [],
    };
  } else {
    const equities = o.equities.length ? o.equities : Object.keys(snapshot.equities);
    for (const e of equities)
      if (!snapshot.equities[e]) {
        io.err(
          `factor-triage calibrate: --equity ${e} is not in ${o.files[0]} (it has ${Object.keys(snapshot.equities).join(', ')})`,
        );
        return EXIT.badInput;
      }
    const analysis = snapshotLadderBasis(snapshot, { equities });
    const notes: string[] = [];
    let candidates = o.factors ?? ['stochVol', 'domesticRate', 'foreignRate'];
    if (candidates.includes('foreignRate') && analysis.currencies.length < 2) {
      candidates = candidates.filter((x) => x !== 'foreignRate');
      if (o.factors)
        notes.push(`no equity is quoted outside ${analysis.currency}: the foreign rate is left out`);
    }
    if (candidates.includes('stochVol') && equities.length === 0)
      candidates = candidates.filter((x) => x !== 'stochVol');
    candidates = [...new Set(candidates)].sort((x, y) => FACTOR_IDS.indexOf(x) - FACTOR_IDS.indexOf(y));
    basis = { kind: 'snapshot', deal: null, analysis, candidates, required: [], notes };
  }
  for (const [i, s] of snapshots.entries())
    for (const e of basis.analysis.equities)
      if (i > 0 && !s.equities[e.marketName]) {
        io.err(
          `factor-triage calibrate: ${o.files[i]} has no equity ${e.marketName} (every file of a series must quote the ladder's equities)`,
        );
        return EXIT.badInput;
      }
  let req = studyLadderRequest({
    snapshot,
    analysis: basis.analysis,
    candidates: basis.candidates,
    required: basis.required,
    settings,
  });
  if (req.hestonMcRefit && (o.paths !== null || o.seed !== null))
    req = {
      ...req,
      hestonMcRefit: {
        ...req.hestonMcRefit,
        ...(o.paths !== null ? { paths: o.paths } : {}),
        ...(o.seed !== null ? { seed: o.seed } : {}),
      },
    };
  io.progress(0, 'calibrating');
  const L = calibrateLadder(req);
  const localVol: Record<string, LocalVolCalibration> = {};
  if (o.localVol)
    for (const e of basis.analysis.equities) {
      // The study's local-vol diagnostic: SVI surface and Dupire local vol under deterministic rates.
      const q = snapshot.equities[e.marketName]!;
      localVol[e.marketName] = calibrateLocalVol({
        name: e.marketName,
        equity: q,
        curve: makeCurve(snapshot.curves[q.currency]!, `market.curves.${q.currency}`),
      });
    }
  io.progress(snapshots.length > 1 ? 0.5 : 1, 'calibrating');
  let S: StabilityReport | null = null;
  if (snapshots.length > 1) {
    const ladder: Omit<LadderRequest, 'snapshot'> = {
      analysis: req.analysis,
      candidates: req.candidates,
      required: req.required,
      mode: req.mode,
      scheme: req.scheme,
      ...(req.bsStrikes ? { bsStrikes: req.bsStrikes } : {}),
      ...(req.hestonMcRefit ? { hestonMcRefit: req.hestonMcRefit } : {}),
    };
    S = calibrationStability(snapshots, { ladder });
    io.progress(1, 'calibrating');
  }
  if (o.json) {
    io.out(
      JSON.stringify(
        {
          format: CALIBRATION_FORMAT,
          source: o.files,
          basis: {
            kind: basis.kind,
            deal: basis.deal,
            currency: basis.analysis.currency,
            currencies: basis.analysis.currencies,
            equities: basis.analysis.equities,
            lastTime: basis.analysis.lastTime,
            notes: basis.notes,
          },
          candidates: basis.candidates,
          required: basis.required,
          mode: req.mode,
          scheme: req.scheme,
          hestonMcRefit: req.hestonMcRefit ?? null,
          ladder: L,
          localVol,
          stability: S,
          note: CAUTION,
        },
        null,
        2,
      ),
    );
  } else {
    render(snapshot, L, basis, req, localVol, io);
    if (S) renderStability(S, io);
    io.out('');
    io.out(CAUTION);
  }
  return EXIT.ok;
}
