/**
 * Fit: how each model variant of the ladder was calibrated — quoted against fitted vols per maturity,
 * the parameters, the residuals (and their Monte Carlo reprice on the study's own paths), and how stable
 * the parameters are across the snapshot dates.
 */
import { useEffect, useState } from 'react';
import type { StabilityReport } from '../../engine/calibration/calibrationStability.ts';
import type { LadderVariant, SavedStudy } from '../../engine/study/types.ts';
import { errorText, useApp } from '../state/appContext.ts';
import { LineChart } from '../components/charts.tsx';
import { num, pct, secs } from '../components/format.ts';

interface ParsedInstrument {
  group: string;
  x: number | null;
}

/** Reads an expiry and a strike (or moneyness) out of an instrument label when it carries them. */
function parseInstrument(label: string): ParsedInstrument {
  const t = label.match(/(?:T\s*=\s*|expiry\s*)([\d.]+)\s*y?/i) ?? label.match(/\b([\d.]+)\s*y\b/i);
  const k = label.match(/(?:K\s*=\s*|strike\s*|m\s*=\s*|moneyness\s*)([\d.]+%?)/i);
  const name = label.match(/^([A-Za-z][A-Za-z0-9/_:-]*)/)?.[1] ?? '';
  const group = t ? `${name} ${t[1]}y`.trim() : name || 'instruments';
  const x = k ? Number(k[1]!.replace('%', '')) / (k[1]!.endsWith('%') ? 100 : 1) : null;
  return { group, x };
}

function paramsOf(v: LadderVariant): { name: string; value: number }[] {
  const out: { name: string; value: number }[] = [];
  for (const e of v.spec.equities) {
    const d = e.dynamics;
    if (d.kind === 'heston')
      for (const k of ['v0', 'kappa', 'theta', 'sigma', 'rho'] as const)
        out.push({ name: `${e.name} ${k}`, value: d[k] });
    else if (d.kind === 'bs')
      d.vols.forEach((s, i) => out.push({ name: `${e.name} σ to ${num(d.volTimes[i], 3)}y`, value: s }));
    else out.push({ name: `${e.name} local vol grid`, value: d.values.length * (d.values[0]?.length ?? 0) });
  }
  for (const [ccy, r] of Object.entries(v.spec.rates))
    if (r.hw) {
      out.push({ name: `${ccy} mean reversion a`, value: r.hw.a });
      const s = r.hw.sigma;
      if (Array.isArray(s)) s.forEach((x, i) => out.push({ name: `${ccy} σ piece ${i + 1}`, value: x }));
      else out.push({ name: `${ccy} σ`, value: s });
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
          <VariantFit v={v} />
          <Stability s={s} />
          <SeriesStability />
        </section>
      </div>
    </div>
  );
}

function VariantFit(props: { v: LadderVariant }) {
  const { v } = props;
  const fit = v.calibration.fit;
  const parsed = fit.map((f) => ({ f, p: parseInstrument(f.instrument) }));
  const groups = Array.from(new Set(parsed.map((x) => x.p.group)));
  const byStrike = parsed.every((x) => x.p.x !== null) && groups.length <= 12;
  const params = paramsOf(v);
  return (
    <>
      <section className="panel">
        <h2>{v.label}: quoted and fitted</h2>
        {fit.length === 0 ? (
          <p className="empty">This variant has no calibration instruments (it reads the curve only).</p>
        ) : byStrike ? (
          <div className="chart-grid">
            {groups.map((g) => {
              const rows = parsed.filter((x) => x.p.group === g);
              return (
                <LineChart
                  key={g}
                  title={g}
                  xLabel="strike"
                  yLabel="vol"
                  yFormat={(y) => pct(y, 1)}
                  height={200}
                  series={[
                    {
                      name: 'quoted',
                      style: 'markers',
                      tone: 1,
                      points: rows.map((r) => ({ x: r.p.x!, y: r.f.marketVol })),
                    },
                    { name: 'fitted', tone: 0, points: rows.map((r) => ({ x: r.p.x!, y: r.f.modelVol })) },
                  ]}
                />
              );
            })}
          </div>
        ) : (
          <LineChart
            title="Quoted and fitted vol per instrument"
            xLabel="instrument (table order)"
            yLabel="vol"
            yFormat={(y) => pct(y, 1)}
            series={[
              {
                name: 'quoted',
                style: 'markers',
                tone: 1,
                points: fit.map((f, i) => ({ x: i + 1, y: f.marketVol })),
              },
              { name: 'fitted', tone: 0, points: fit.map((f, i) => ({ x: i + 1, y: f.modelVol })) },
            ]}
          />
        )}
      </section>
      <div className="two-even">
        <section className="panel">
          <h2>Parameters</h2>
          <table className="data">
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
            RMSE {num(v.calibration.rmseVol * 1e4, 3)} vol bp, worst{' '}
            {num(v.calibration.maxAbsVolError * 1e4, 3)} vol bp. The last column reprices each instrument by
            Monte Carlo on the study's paths (evidence that the comparison is fair).
          </p>
          <div className="scroll-y">
            <table className="data">
              <thead>
                <tr>
                  <th>Instrument</th>
                  <th className="num">Quoted</th>
                  <th className="num">Fitted</th>
                  <th className="num">Error (vol bp)</th>
                  <th className="num">MC − market</th>
                </tr>
              </thead>
              <tbody>
                {fit.map((f, i) => (
                  <tr key={i}>
                    <td>{f.instrument}</td>
                    <td className="num">{pct(f.marketVol, 2)}</td>
                    <td className="num">{pct(f.modelVol, 2)}</td>
                    <td className="num">{num((f.modelVol - f.marketVol) * 1e4, 3)}</td>
                    <td className="num">
                      {f.mcError ? `${num(f.mcError.value, 3)} ± ${num(f.mcError.se, 2)}` : '—'}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </section>
      </div>
    </>
  );
}

function Stability(props: { s: SavedStudy }) {
  const st = props.s.results.stability;
  const variants = Array.from(new Set(st.flatMap((d) => Object.keys(d.params))));
  const [picked, setVariant] = useState<string | null>(null);
  if (st.length === 0)
    return (
      <section className="panel">
        <h2>Stability across dates</h2>
        <p className="empty">
          This study was run on one snapshot; add more dates on the Market screen to measure parameter
          stability.
        </p>
      </section>
    );
  const variant = picked !== null && variants.includes(picked) ? picked : (variants[0] ?? '');
  const names = Array.from(new Set(st.flatMap((d) => Object.keys(d.params[variant] ?? {}))));
  const factors = Array.from(new Set(st.flatMap((d) => Object.keys(d.verdicts))));
  return (
    <section className="panel">
      <h2>Stability across dates</h2>
      <div className="row-fields">
        <label>
          Variant{' '}
          <select value={variant} onChange={(e) => setVariant(e.target.value)}>
            {variants.map((x) => (
              <option key={x}>{x}</option>
            ))}
          </select>
        </label>
      </div>
      <div className="two-even">
        <div className="scroll-x">
          <table className="data">
            <thead>
              <tr>
                <th>Date</th>
                {factors.map((f) => (
                  <th key={f}>{f}</th>
                ))}
                {names.map((n) => (
                  <th key={n} className="num">
                    {n}
                  </th>
                ))}
              </tr>
            </thead>
            <tbody>
              {st.map((d) => (
                <tr key={d.date}>
                  <td>{d.date}</td>
                  {factors.map((f) => (
                    <td key={f}>{d.verdicts[f] ?? '—'}</td>
                  ))}
                  {names.map((n) => (
                    <td key={n} className="num">
                      {num(d.params[variant]?.[n], 4)}
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
        <LineChart
          title="Parameters relative to their first date"
          xLabel="date (order)"
          yLabel="value / first value"
          series={names.map((n) => {
            const first = st.find((d) => d.params[variant]?.[n] !== undefined)?.params[variant]?.[n] ?? NaN;
            return {
              name: n,
              points: st.map((d, i) => ({ x: i + 1, y: (d.params[variant]?.[n] ?? NaN) / first })),
            };
          })}
        />
      </div>
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
        {currencies.join(', ') || 'none'}) calibrated on every date, each warm-started from the previous one.
        Parameters that move while the fit stays good are poorly identified.
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
        <div className="two-even" data-testid="stability-report">
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
            xLabel="date (order)"
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
