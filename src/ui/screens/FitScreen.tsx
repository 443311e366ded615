/**
 * Fit: how each model variant of the ladder was calibrated — quoted against fitted vols per maturity,
 * the parameters, the residuals (and their Monte Carlo reprice on the study's own paths), and how stable
 * the parameters are across the snapshot dates.
 */
import { factorShortName } from '../components/factorNames.ts';
import { useEffect, useState } from 'react';
import type { StabilityReport } from '../../engine/calibration/calibrationStability.ts';
import type { LadderVariant, SavedStudy } from '../../engine/study/types.ts';
import type { MarketSnapshot } from '../../engine/market/types.ts';
import { errorText, useApp } from '../state/appContext.ts';
import { LineChart } from '../components/charts.tsx';
import { SmileChart, type SmileCurve } from '../components/SmileChart.tsx';
import { groupFit, rmseOf, type FitLine, type GroupedFit } from './fitGroups.ts';
import { num, pct, secs } from '../components/format.ts';

/** Heston parameters with their meaning and unit (Heston 1993, Rev. Financ. Stud. 6(2), eq. 1 notation). */
const HESTON_PARAM = {
  v0: 'v₀ variance today',
  kappa: 'κ mean reversion (per year)',
  theta: 'θ long-run variance',
  sigma: 'σ vol of variance',
  rho: 'ρ spot–variance correlation',
} as const;

function paramsOf(v: LadderVariant): { name: string; value: number }[] {
  const out: { name: string; value: number }[] = [];
  for (const e of v.spec.equities) {
    const d = e.dynamics;
    if (d.kind === 'heston')
      for (const k of ['v0', 'kappa', 'theta', 'sigma', 'rho'] as const)
        out.push({ name: `${e.name} ${HESTON_PARAM[k]}`, value: d[k] });
    else if (d.kind === 'bs')
      d.vols.forEach((s, i) => out.push({ name: `${e.name} σ to ${num(d.volTimes[i], 3)}y`, value: s }));
    else
      out.push({
        name: `${e.name} local vol grid (points)`,
        value: d.values.length * (d.values[0]?.length ?? 0),
      });
  }
  for (const [ccy, r] of Object.entries(v.spec.rates))
    if (r.hw) {
      out.push({ name: `${ccy} mean reversion a (per year)`, value: r.hw.a });
      const s = r.hw.sigma;
      if (Array.isArray(s))
        s.forEach((x, i) =>
          out.push({ name: `${ccy} short-rate vol σ, piece ${i + 1} (absolute)`, value: x }),
        );
      else out.push({ name: `${ccy} short-rate vol σ (absolute)`, value: s });
    }
  return out;
}

export function FitScreen() {
  const { doc } = useApp();
  const s = doc.study;
  const [picked, setSel] = useState<number | null>(null);
  if (!s)
    return (
      <div className="screen">
        <div className="empty-state">
          <h2>No calibration yet</h2>
          <p>Calibrations are part of a study: run one on the Triage screen, or open a saved study.</p>
        </div>
      </div>
    );
  // Start on the richest variant of the ladder (most factors): its fit is the one the verdicts lean on.
  const richest = s.ladder.reduce(
    (best, x, i) => (x.role === 'ladder' && x.factors.length > s.ladder[best]!.factors.length ? i : best),
    0,
  );
  const sel = picked !== null && picked < s.ladder.length ? picked : richest;
  const v = s.ladder[sel]!;
  return (
    <div className="screen fit">
      <div className="two-col">
        <aside className="side-panel">
          <h2>Variants</h2>
          <ul className="variant-list">
            {s.ladder.map((x, i) => (
              <li key={x.id}>
                <button
                  className={i === sel ? 'current' : ''}
                  onClick={() => setSel(i)}
                  aria-current={i === sel ? 'true' : undefined}
                >
                  <strong>{x.label}</strong>
                  <span>
                    RMSE {num(x.calibration.rmseVol * 1e4, 3)} vol bp · {x.calibration.characteristicFunction}{' '}
                    CF · {secs(x.calibration.seconds)}
                  </span>
                </button>
              </li>
            ))}
          </ul>
          {doc.stale && (
            <p className="msg-warn">
              The market or deal changed since this study ran; these fits describe the older inputs.
            </p>
          )}
        </aside>
        <section className="editor">
          <VariantFit v={v} market={s.input.markets[0]} />
          <Stability s={s} />
          <SeriesStability />
        </section>
      </div>
    </div>
  );
}

/** Units of one rate group, from the quote type of the pricing snapshot (normal vols in bp, lognormal in %). */
function rateUnits(quoteType: 'normal' | 'lognormal' | null): {
  axis: string;
  show: (v: number) => string;
  tick: (v: number) => string;
  error: string;
  errorScale: number;
} {
  return quoteType === 'lognormal'
    ? {
        axis: 'lognormal vol',
        show: (v) => pct(v, 2),
        tick: (v) => pct(v, 1),
        error: 'vol bp',
        errorScale: 1e4,
      }
    : {
        axis: quoteType === 'normal' ? 'normal vol (bp)' : 'vol (bp, quote type not in the snapshot)',
        show: (v) => `${(v * 1e4).toFixed(1)} bp`,
        tick: (v) => (v * 1e4).toFixed(0),
        error: 'bp',
        errorScale: 1e4,
      };
}

const NOTE_TEXT: Record<Exclude<FitLine['note'], 'repriced'>, string> = {
  notSelected: 'not repriced (see note)',
  noneInStudy: 'none in this study (see note)',
  swaption: 'closed form only (see note)',
  checkOnly: '',
};

function McCell(props: { line: FitLine; ccy: string }) {
  const { line } = props;
  if (line.mc) {
    const far = Math.abs(line.mc.value) > 3 * line.mc.se;
    return (
      <td
        className={`num ${far ? 'bad' : ''}`}
        title={far ? 'more than 3 standard errors from the market price' : undefined}
      >
        {num(line.mc.value, 3)} ± {num(line.mc.se, 2)} {props.ccy}
      </td>
    );
  }
  return <td className="num hint">{NOTE_TEXT[line.note as Exclude<FitLine['note'], 'repriced'>]}</td>;
}

function smileCurves(g: GroupedFit['equities'][number]): SmileCurve[] {
  const xOf = (l: FitLine): number => l.moneyness ?? l.parsed.strike ?? NaN;
  return g.expiries.map((e) => {
    const fittedLines = e.lines.filter((l) => l.note !== 'checkOnly' && Number.isFinite(xOf(l)));
    const checks = e.lines.filter((l) => l.note === 'checkOnly' && Number.isFinite(xOf(l)));
    return {
      key: String(e.expiry),
      label: `${num(e.expiry, 3)}y`,
      quoted: [...fittedLines, ...checks].map((l) => ({
        x: xOf(l),
        y: l.marketVol,
        note: `${l.label}: quoted ${pct(l.marketVol, 2)}, fitted ${pct(l.modelVol, 2)}`,
      })),
      fitted: fittedLines.map((l) => ({ x: xOf(l), y: l.modelVol })),
      checks: checks.map((l) => ({
        x: xOf(l),
        y: l.modelVol,
        note: `${l.label}: model ${pct(l.modelVol, 2)} (not fitted)`,
      })),
    };
  });
}

function VariantFit(props: { v: LadderVariant; market: MarketSnapshot | undefined }) {
  const { v, market } = props;
  const fit = v.calibration.fit;
  const grouped = groupFit(fit, market);
  const params = paramsOf(v);
  const stochasticRates = Object.entries(v.spec.rates)
    .filter(([, r]) => r.hw)
    .map(([c]) => c);
  const hasMc = fit.some((f) => f.mcError !== null);
  const notes = new Set(
    [
      ...grouped.equities.flatMap((e) => e.expiries.flatMap((x) => x.lines)),
      ...grouped.rates.flatMap((r) => r.lines),
    ].map((l) => l.note),
  );
  return (
    <>
      <section className="panel">
        <h2>{v.label}: quoted and fitted</h2>
        {fit.length === 0 ? (
          <p className="empty">This variant has no calibration instruments (it reads the curve only).</p>
        ) : (
          <div
            style={{
              display: 'grid',
              gap: 12,
              gridTemplateColumns:
                grouped.equities.length > 0 ? 'minmax(0, 3fr) minmax(0, 2fr)' : 'minmax(0, 1fr)',
            }}
          >
            {grouped.equities.map((e) => (
              <SmileChart
                key={e.name}
                testId={`smile-${e.name}`}
                title={`${e.name} smile per expiry`}
                xLabel={e.spot !== null ? `moneyness K / S₀ (S₀ = ${num(e.spot, 6)})` : 'strike'}
                yLabel="implied vol"
                xFormat={(x) => (e.spot !== null ? x.toFixed(2) : num(x, 4))}
                yFormat={(y) => pct(y, 0)}
                width={470}
                height={310}
                curves={smileCurves(e)}
              />
            ))}
            <div>
              {grouped.rates.length > 0 ? (
                grouped.rates.map((r) => {
                  const u = rateUnits(r.quoteType);
                  const cal = r.lines.filter((l) => !l.parsed.monteCarlo);
                  return (
                    <SmileChart
                      key={r.currency}
                      testId={`ratevols-${r.currency}`}
                      title={`${r.currency} ${cal[0]?.parsed.rateInstrument ?? 'rate'} vols by expiry`}
                      xLabel="expiry (years)"
                      yLabel={u.axis}
                      xFormat={(x) => num(x, 3)}
                      yFormat={u.tick}
                      width={grouped.equities.length > 0 ? 310 : 560}
                      height={grouped.equities.length > 0 ? 310 : 260}
                      curves={[
                        {
                          key: r.currency,
                          label: `${r.currency} (${r.quoteType ?? 'type unknown'})`,
                          quoted: cal.map((l) => ({
                            x: l.parsed.expiry ?? NaN,
                            y: l.marketVol,
                            note: `${l.label}: quoted ${u.show(l.marketVol)}, fitted ${u.show(l.modelVol)}`,
                          })),
                          fitted: cal.map((l) => ({ x: l.parsed.expiry ?? NaN, y: l.modelVol })),
                        },
                      ]}
                    />
                  );
                })
              ) : (
                <div className="empty" data-testid="no-rate-vols">
                  <strong>No rate vols in this fit.</strong>{' '}
                  {stochasticRates.length > 0
                    ? `This variant simulates ${stochasticRates.join(', ')} rates, but its fit carries no cap or swaption rows.`
                    : 'Rates follow the discount curve in this variant (no Hull–White factor), so no cap or swaption vols are fitted. Pick a variant with a stochastic rate to see them.'}
                </div>
              )}
            </div>
          </div>
        )}
      </section>
      <div className="two-even">
        <section className="panel">
          <h2>Parameters</h2>
          <table className="data params">
            <tbody>
              {params.map((p) => (
                <tr key={p.name}>
                  <td>{p.name}</td>
                  <td className="num">{num(p.value, 5)}</td>
                </tr>
              ))}
              {Object.entries(v.calibration.feller).map(([k, r]) => (
                <tr key={`f${k}`}>
                  <td>{k} Feller ratio 2κθ/σ²</td>
                  <td className={`num ${r < 1 ? 'bad' : ''}`}>
                    {num(r, 3)}
                    {r < 1 ? ' (variance can reach zero)' : ''}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          {v.calibration.warnings.length > 0 && (
            <ul className="tight">
              {v.calibration.warnings.map((w, k) => (
                <li key={k} className="msg-warn">
                  {w}
                </li>
              ))}
            </ul>
          )}
        </section>
        <section className="panel">
          <h2>Residuals</h2>
          <p className="hint">
            Error = fitted − quoted. The last column reprices the instrument by Monte Carlo on the study's own
            paths, minus its market price (evidence that every variant is compared on a fair footing; red:
            beyond 3 standard errors).
          </p>
          <div className="scroll-y">
            <table className="data" data-testid="fit-residuals">
              <thead>
                <tr>
                  <th>Instrument</th>
                  <th className="num">Quoted</th>
                  <th className="num">Fitted</th>
                  <th className="num">Error</th>
                  <th className="num">MC − market</th>
                </tr>
              </thead>
              {grouped.equities.flatMap((e) => {
                const ccy = market?.equities[e.name]?.currency ?? '';
                return e.expiries.map((x) => {
                  const rm = rmseOf(x.lines);
                  return (
                    <tbody key={`${e.name}|${x.expiry}`}>
                      <tr className="group-head">
                        <th colSpan={5} scope="rowgroup">
                          {e.name} · expiry {num(x.expiry, 3)}y{' '}
                          <span className="hint">
                            vols in %, error in vol bp
                            {Number.isFinite(rm) ? ` · RMSE ${num(rm * 1e4, 3)} vol bp` : ''}
                          </span>
                        </th>
                      </tr>
                      {x.lines.map((l) => (
                        <tr key={l.label}>
                          <td>
                            K {num(l.parsed.strike, 6)}
                            {l.moneyness !== null ? ` (${l.moneyness.toFixed(3)} S₀)` : ''}
                            {l.note === 'checkOnly' && <span className="hint"> · check</span>}
                            {l.parsed.monteCarlo && l.note !== 'checkOnly' && (
                              <span className="hint"> · repriced</span>
                            )}
                          </td>
                          <td className="num">{pct(l.marketVol, 2)}</td>
                          {l.parsed.monteCarlo && l.modelVol === l.marketVol ? (
                            <>
                              <td className="num hint">as quoted</td>
                              <td
                                className="num hint"
                                title="this variant reproduces the quoted surface by construction; its Monte Carlo reprice is the test"
                              >
                                by construction
                              </td>
                            </>
                          ) : (
                            <>
                              <td className="num">{pct(l.modelVol, 2)}</td>
                              <td className="num">{num((l.modelVol - l.marketVol) * 1e4, 3)}</td>
                            </>
                          )}
                          <McCell line={l} ccy={ccy} />
                        </tr>
                      ))}
                    </tbody>
                  );
                });
              })}
              {grouped.rates.map((r) => {
                const u = rateUnits(r.quoteType);
                const rm = rmseOf(r.lines);
                return (
                  <tbody key={`rate|${r.currency}`}>
                    <tr className="group-head">
                      <th colSpan={5} scope="rowgroup">
                        {r.currency} rate vols{' '}
                        <span className="hint">
                          {r.quoteType ?? 'quote type unknown'}, vols{' '}
                          {r.quoteType === 'lognormal' ? 'in %' : 'in bp'}, error in {u.error}
                          {Number.isFinite(rm) ? ` · RMSE ${num(rm * u.errorScale, 3)} ${u.error}` : ''}
                        </span>
                      </th>
                    </tr>
                    {r.lines.map((l) => (
                      <tr key={l.label}>
                        <td>
                          {l.parsed.rateInstrument} {num(l.parsed.expiry, 3)}y × {num(l.parsed.tenor, 3)}y
                          {l.parsed.strike !== null ? ` K ${pct(l.parsed.strike, 3)}` : ''}
                          {l.parsed.monteCarlo && <span className="hint"> · repriced</span>}
                        </td>
                        <td className="num">{u.show(l.marketVol)}</td>
                        <td className="num">{u.show(l.modelVol)}</td>
                        <td className="num">{num((l.modelVol - l.marketVol) * u.errorScale, 3)}</td>
                        <McCell line={l} ccy={r.currency} />
                      </tr>
                    ))}
                  </tbody>
                );
              })}
              {grouped.other.length > 0 && (
                <tbody>
                  <tr className="group-head">
                    <th colSpan={5} scope="rowgroup">
                      Other instruments <span className="hint">vols in %, error in vol bp</span>
                    </th>
                  </tr>
                  {grouped.other.map((l) => (
                    <tr key={l.label}>
                      <td>{l.label}</td>
                      <td className="num">{pct(l.marketVol, 2)}</td>
                      <td className="num">{pct(l.modelVol, 2)}</td>
                      <td className="num">{num((l.modelVol - l.marketVol) * 1e4, 3)}</td>
                      <McCell line={l} ccy="" />
                    </tr>
                  ))}
                </tbody>
              )}
            </table>
          </div>
          <ul className="tight hint" data-testid="mc-notes">
            {!hasMc && (
              <li>
                None in this study: it carries no Monte Carlo reprice for this variant (the fairness check did
                not run, or the study was saved without it), so only the analytic fit can be shown.
              </li>
            )}
            {notes.has('notSelected') && (
              <li>
                Not repriced: the study reprices a few vanillas per equity (three strikes around the forward
                at its last expiries) on its paths, not every calibration quote.
              </li>
            )}
            {notes.has('swaption') && (
              <li>
                Closed form only: swaptions are fitted by the Jamshidian formula and not repriced on the
                paths.
              </li>
            )}
            {notes.has('checkOnly') && (
              <li>
                Check: a vanilla this variant was not calibrated to, repriced to show how the model
                extrapolates (drawn as a dashed circle on the smile).
              </li>
            )}
          </ul>
        </section>
      </div>
    </>
  );
}

/** Verdict words as people read them. */
const VERDICT_WORD: Record<string, string> = {
  keep: 'keep',
  drop: 'drop',
  undecided: 'undecided',
  required: 'required',
  notNeeded: 'not needed',
};

function Stability(props: { s: SavedStudy }) {
  const st = props.s.results.stability;
  const models = Array.from(new Set(st.flatMap((d) => Object.keys(d.params))));
  const [picked, setModel] = useState<string | null>(null);
  if (st.length < 2)
    return (
      <section className="panel" data-testid="study-stability">
        <h2>Stability across dates</h2>
        <p className="empty">
          This study was run on {st.length === 1 ? `one snapshot (${st[0]!.date})` : 'one snapshot'}, so there
          is nothing to compare yet: add more market dates on the Market screen and run the study again to see
          whether its parameters and verdicts hold from one date to the next.
        </p>
      </section>
    );
  const model = picked !== null && models.includes(picked) ? picked : (models[0] ?? '');
  const names = Array.from(new Set(st.flatMap((d) => Object.keys(d.params[model] ?? {}))));
  const factors = Array.from(new Set(st.flatMap((d) => Object.keys(d.verdicts))));
  const holds = (f: string): boolean => new Set(st.map((d) => d.verdicts[f])).size === 1;
  const spread = (n: string): number => {
    const xs = st
      .map((d) => d.params[model]?.[n])
      .filter((x): x is number => x !== undefined && Number.isFinite(x));
    if (xs.length < 2) return NaN;
    const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
    return mean !== 0 ? (Math.max(...xs) - Math.min(...xs)) / Math.abs(mean) : NaN;
  };
  return (
    <section className="panel" data-testid="study-stability">
      <h2>Stability across the study's {st.length} dates</h2>
      <p className="hint">
        The study re-ran its calibration and verdicts on every snapshot it carries. A verdict that changes
        from one date to the next rests on market detail; a parameter that moves a lot while the fit stays
        good is poorly identified.
      </p>
      <div className="two-even">
        <div>
          <h3>Verdicts per date</h3>
          <table className="data">
            <thead>
              <tr>
                <th>Factor</th>
                {st.map((d) => (
                  <th key={d.date}>{d.date}</th>
                ))}
                <th>Across dates</th>
              </tr>
            </thead>
            <tbody>
              {factors.map((f) => (
                <tr key={f}>
                  <td>{factorShortName(f)}</td>
                  {st.map((d) => (
                    <td key={d.date}>
                      {d.verdicts[f] ? (VERDICT_WORD[d.verdicts[f]!] ?? d.verdicts[f]) : 'not run'}
                    </td>
                  ))}
                  <td className={holds(f) ? '' : 'bad'}>{holds(f) ? 'holds' : 'changes'}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
        <div>
          <h3>
            <label>
              Parameters of{' '}
              <select value={model} onChange={(e) => setModel(e.target.value)} data-testid="stability-model">
                {models.map((x) => (
                  <option key={x}>{x}</option>
                ))}
              </select>
            </label>
          </h3>
          <table className="data">
            <thead>
              <tr>
                <th>Parameter</th>
                {st.map((d) => (
                  <th key={d.date} className="num">
                    {d.date}
                  </th>
                ))}
                <th className="num" title="(largest − smallest) / |mean| over the dates">
                  Range / mean
                </th>
              </tr>
            </thead>
            <tbody>
              {names.map((n) => (
                <tr key={n}>
                  <td>{n}</td>
                  {st.map((d) => (
                    <td key={d.date} className="num">
                      {num(d.params[model]?.[n], 4)}
                    </td>
                  ))}
                  <td className="num">{pct(spread(n), 1)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </div>
      <LineChart
        title={`${model}: each parameter relative to its value on ${st[0]!.date}`}
        xLabel="snapshot (1 = pricing date)"
        yLabel="value / first value"
        height={200}
        xFormat={(x) => (Number.isInteger(x) ? String(x) : '')}
        series={names.map((n) => {
          const first = st.find((d) => d.params[model]?.[n] !== undefined)?.params[model]?.[n] ?? NaN;
          return {
            name: n,
            points: st.map((d, i) => ({ x: i + 1, y: (d.params[model]?.[n] ?? NaN) / first })),
          };
        })}
      />
    </section>
  );
}

/** Parameter paths over the market dates on the Market screen (recalibrated here, independent of the study). */
function SeriesStability() {
  const { doc, engine } = useApp();
  const markets = doc.markets;
  const [report, setReport] = useState<StabilityReport | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const equities = Array.from(
    new Set(
      Object.entries(doc.deal.underlyings ?? {}).flatMap(([id, u]) =>
        u.kind === 'equity' ? [u.marketName ?? id] : [],
      ),
    ),
  ).filter((n) => markets.every((m) => n in m.equities));
  const currencies = Array.from(new Set([doc.deal.currency, ...(doc.deal.rates ?? [])])).filter((c) =>
    markets.every((m) => m.rateVols && c in m.rateVols),
  );
  useEffect(() => {
    setReport(null);
    setError(null);
  }, [markets]);
  if (markets.length < 2) return null;
  const run = (): void => {
    setBusy(true);
    setError(null);
    engine
      .call('calibration.stability', { snapshots: markets, equities, currencies })
      .then(setReport, (e) => setError(errorText(e)))
      .finally(() => setBusy(false));
  };
  return (
    <section className="panel">
      <h2>Parameter stability over the {markets.length} market dates</h2>
      <p className="hint">
        Heston per equity ({equities.join(', ') || 'none'}) and Hull–White per currency (
        {currencies.join(', ') || 'none'}) calibrated on every date from the same starts, exactly as a study
        of that date would calibrate them. Parameters that move while the fit stays good are poorly
        identified.
      </p>
      <div className="button-row">
        <button
          onClick={run}
          disabled={busy || (equities.length === 0 && currencies.length === 0)}
          data-testid="run-stability"
        >
          {busy ? 'Calibrating…' : report ? 'Calibrate again' : 'Calibrate every date'}
        </button>
      </div>
      {error && (
        <p className="msg-error" role="alert">
          {error}
        </p>
      )}
      {report && (
        <div data-testid="stability-report">
          <table className="data">
            <thead>
              <tr>
                <th>Model</th>
                <th>Parameter</th>
                <th className="num">First</th>
                <th className="num">Last</th>
                <th className="num">Coefficient of variation</th>
                <th className="num">Fit RMSE (last)</th>
              </tr>
            </thead>
            <tbody>
              {report.paths.map((p) => (
                <tr key={`${p.model}.${p.parameter}`}>
                  <td>{p.model}</td>
                  <td>{p.parameter}</td>
                  <td className="num">{num(p.values[0], 4)}</td>
                  <td className="num">{num(p.values[p.values.length - 1], 4)}</td>
                  <td className="num">{pct(p.coefficientOfVariation, 1)}</td>
                  <td className="num">{num(p.fitRmse[p.fitRmse.length - 1], 3)}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <LineChart
            title="Each parameter relative to its first date"
            height={200}
            xFormat={(x) => (Number.isInteger(x) ? String(x) : '')}
            xLabel="market date (order)"
            yLabel="value / first value"
            series={report.paths.map((p) => ({
              name: `${p.model} ${p.parameter}`,
              points: p.values.map((v, i) => ({ x: i + 1, y: v / p.values[0]! })),
            }))}
          />
        </div>
      )}
    </section>
  );
}
