/**
 * `factor-triage calibrate MARKET_FILE [MORE_FILES...] [options]`: calibrates every ladder variant to one market
 * snapshot and prints the fit reports (readable tables, or JSON with --json). With several files (a series of
 * dates) it also prints each parameter's stability across them.
 */
import { readFile } from 'node:fs/promises';
import type { CliIo } from '../main.ts';
import { EXIT } from '../main.ts';
import { parseSnapshotText } from '../../engine/market/snapshot.ts';
import type { MarketSnapshot } from '../../engine/market/types.ts';
import {
  calibrateLadder,
  calibrationStability,
  type FactorSet,
  type LadderCalibration,
  type LadderCalibrationRequest,
  type StabilityReport,
} from '../../engine/calibration/index.ts';

export const summary =
  'Calibrate every model variant of the ladder to a market snapshot and print the fit reports.';
export const usage = [
  'usage: factor-triage calibrate MARKET_FILE [MORE_FILES...] [options]',
  '',
  '  MARKET_FILE          a market snapshot (schema "factor-triage/market@1"); several files: a series of dates',
  '  --json               print the reports as JSON',
  '  --equity NAME        calibrate this equity (repeatable; default every equity of the snapshot)',
  '  --factors LIST       candidate factors, comma separated from vol, dom, for (default vol,dom,for)',
  '  --refit MODE         Heston refit under stochastic rates: analytic (default) or monte-carlo',
  '  --paths N            Monte Carlo paths of the monte-carlo refit (default 32768)',
  '  --seed S             seed of the refit\'s own random stream (default "calibration")',
  '  --hw MODE            Hull–White sigma: constant (default) or piecewise',
  '  --local-vol          also fit the SVI surface and Dupire local vol per equity',
].join('\n');

export const CALIBRATION_FORMAT = 'factor-triage/calibration@1';
const CAUTION =
  "Calibration output informs pricing decisions; it is not investment advice. Model choice remains subject to your firm's model-risk policy and independent validation.";

interface Options {
  json: boolean;
  files: string[];
  equities: string[];
  factors: FactorSet;
  refit: 'analytic' | 'monte-carlo';
  paths: number;
  seed: string;
  hw: 'constant' | 'piecewise';
  localVol: boolean;
}

function parseArgs(args: string[]): Options | string {
  const o: Options = {
    json: false,
    files: [],
    equities: [],
    factors: { stochVol: true, domRate: true, forRate: true },
    refit: 'analytic',
    paths: 32768,
    seed: 'calibration',
    hw: 'constant',
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
      else if (a === '--equity') o.equities.push(value());
      else if (a === '--factors') {
        const list = value()
          .split(',')
          .map((s) => s.trim());
        const bad = list.filter((s) => !['vol', 'dom', 'for'].includes(s));
        if (bad.length) return `--factors: unknown factor "${bad[0]}"; use vol, dom, for`;
        o.factors = {
          stochVol: list.includes('vol'),
          domRate: list.includes('dom'),
          forRate: list.includes('for'),
        };
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
        if (v !== 'constant' && v !== 'piecewise') return `--hw must be constant or piecewise (got "${v}")`;
        o.hw = v;
      } else if (a.startsWith('-')) return `unknown option ${a}; see factor-triage calibrate --help`;
      else o.files.push(a);
    } catch (e) {
      return (e as Error).message;
    }
  }
  if (o.files.length === 0) return 'give a market file (usage: factor-triage calibrate MARKET_FILE [--json])';
  return o;
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
  L: LadderCalibration,
  req: LadderCalibrationRequest,
  io: CliIo,
): void {
  const title = snapshot.name ?? 'market';
  io.out(
    `${title.includes(snapshot.date) ? title : `${title} — ${snapshot.date}`}, numeraire ${snapshot.domestic}`,
  );
  io.out('');
  for (const [c, h] of Object.entries(L.hullWhite)) {
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
  for (const name of req.equities) {
    const v = L.variants.find((x) => x.factors.stochVol && !x.factors.domRate && !x.factors.forRate);
    const rep = v?.reports[name]?.heston;
    if (!rep) continue;
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
        f(rep.spread[k]!.min, 5),
        f(rep.spread[k]!.max, 5),
      ]),
    ))
      io.out('  ' + l);
    io.out(
      `  RMSE ${f(rep.rmseVolPoints, 3)} vol points, max ${f(rep.maxAbsVolPoints, 3)}; Feller ratio 2κθ/σ² = ${f(rep.feller.ratio, 3)} (${rep.feller.satisfied ? 'met' : 'not met: variance can reach 0'}); stop: ${rep.fit.stopReason}; condition ${f(rep.fit.conditionNumber, 1)}; ${rep.starts.length} starts; ${f(rep.seconds * 1e3, 0)} ms${rep.ok ? '' : '  ** FIT NOT ACCEPTED **'}`,
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
  io.out('Ladder: every variant fitted to the same instruments');
  for (const l of table(
    ['variant', 'models', 'char. function', 'calib. ms', 'RMSE vol pts', 'max vol pts', 'status'],
    L.variants.map((v) => [
      v.id,
      Object.entries(v.reports)
        .map(([n, r]) => `${n}:${r.model}`)
        .join(' '),
      v.cost.characteristicFunction,
      f(v.cost.seconds * 1e3, 1),
      f(v.cost.rmseVolPoints, 3),
      f(v.cost.maxAbsVolPoints, 3),
      v.ok ? 'ok' : 'NOT CONVERGED / OUT OF TOLERANCE',
    ]),
  ))
    io.out('  ' + l);
  for (const v of L.variants)
    for (const [n, r] of Object.entries(v.reports))
      if (r.refit) {
        const p = r.refit.params;
        const its = r.refit.iterations
          .map(
            (i) =>
              `check ${i.iteration}: max error ${f(i.maxErrorPoints, 3)} (MC SE ≤ ${f(i.maxSePoints, 3)}), gap ${f(i.maxGapPoints, 3)}`,
          )
          .join('; ');
        io.out(
          `  ${v.id} ${n}: v0 ${f(p.v0, 5)} κ ${f(p.kappa, 4)} θ ${f(p.theta, 5)} σ ${f(p.sigma, 4)} ρ ${f(p.rho, 4)} [${r.refit.status}]${its ? ' — ' + its : ''}`,
        );
      }
  for (const [name, x] of Object.entries(L.fx)) {
    io.out('');
    const q = Object.entries(x.quanto)
      .map(
        ([e, v]) =>
          `ρ(${e}, ${name}) = ${f(v.rho, 2)}${v.range ? ` (plausible ${v.range[0]} … ${v.range[1]})` : ''}`,
      )
      .join('; ');
    io.out(
      `FX ${name}: spot ${x.spec.spot}, lognormal vol ${f(x.spec.vol * 100, 2)}% in every variant; quanto correlation is an input: ${q}`,
    );
  }
  for (const [n, lv] of Object.entries(L.localVol)) {
    io.out('');
    io.out(
      `Local vol ${n}: SVI slices RMSE ${lv.surface.slices.map((s) => f(s.rmseVolPoints, 3)).join(', ')} vol points; ${lv.dynamics.times.length} × ${lv.dynamics.logK.length} grid; ${lv.flooredCells} floored cells`,
    );
  }
  if (L.warnings.length || L.variants.some((v) => v.warnings.length)) {
    io.out('');
    io.out('Warnings:');
    const seen = new Set<string>();
    for (const w of [...L.warnings, ...L.variants.flatMap((v) => v.warnings)])
      if (!seen.has(w.message)) {
        seen.add(w.message);
        io.out(`  ${w.message}`);
      }
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
      ...p.values.map((v) => f(v, 5)),
      f(p.coefficientOfVariation, 3),
      f(Math.max(...p.changes.map(Math.abs)), 5),
      f(p.standardErrors.reduce((s, x) => s + x, 0) / p.standardErrors.length, 5),
      f(Math.max(...p.conditionNumbers), 1),
      f(Math.max(...p.fitRmse), 3),
    ]),
  ))
    io.out('  ' + l);
}

export async function run(args: string[], io: CliIo): Promise<number> {
  const o = parseArgs(args);
  if (typeof o === 'string') {
    io.err(`factor-triage calibrate: ${o}`);
    return EXIT.badInput;
  }
  const snapshots: MarketSnapshot[] = [];
  for (const file of o.files) {
    let text: string;
    try {
      text = await readFile(file, 'utf8');
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      io.err(
        `factor-triage calibrate: cannot read ${file}${code === 'ENOENT' ? ': no such file' : code ? ` (${code})` : ''}`,
      );
      return EXIT.badInput;
    }
    const { snapshot, warnings } = parseSnapshotText(text, file);
    for (const w of warnings) io.err(`${file}: warning: ${w.message}`);
    snapshots.push(snapshot);
  }
  const snapshot = snapshots[0]!;
  const equities = o.equities.length ? o.equities : Object.keys(snapshot.equities);
  for (const e of equities)
    if (!snapshot.equities[e]) {
      io.err(
        `factor-triage calibrate: --equity ${e} is not in ${o.files[0]} (it has ${Object.keys(snapshot.equities).join(', ')})`,
      );
      return EXIT.badInput;
    }
  const req: LadderCalibrationRequest = {
    equities,
    factors: o.factors,
    refit: o.refit,
    ...(o.refit === 'monte-carlo' ? { monteCarlo: { paths: o.paths, seed: o.seed } } : {}),
    hwMode: o.hw,
    localVol: o.localVol,
  };
  io.progress(0, 'calibrating');
  const L = calibrateLadder(snapshot, req);
  io.progress(snapshots.length > 1 ? 0.5 : 1, 'calibrating');
  let S: StabilityReport | null = null;
  if (snapshots.length > 1) {
    const ccys = [...new Set(equities.map((e) => snapshot.equities[e]!.currency))].filter(
      (c) => snapshot.rateVols?.[c],
    );
    S = calibrationStability(snapshots, { equities, currencies: ccys, hwMode: o.hw });
    io.progress(1, 'calibrating');
  }
  if (o.json) {
    io.out(
      JSON.stringify(
        { format: CALIBRATION_FORMAT, source: o.files, ladder: L, stability: S, note: CAUTION },
        null,
        2,
      ),
    );
  } else {
    render(snapshot, L, req, io);
    if (S) renderStability(S, io);
    io.out('');
    io.out(CAUTION);
  }
  return EXIT.ok;
}
