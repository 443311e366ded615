/**
 * Triage: the answer first (one verdict per stochastic factor), then the evidence: Δ with its interval against
 * the threshold, attribution, hedge ratios, correlation sweeps, convergence over the looks, and the costs.
 * The run settings sit in the side panel; a run shows progress and can be cancelled.
 */
import { pairName } from '../components/factorNames.ts';
import { memo } from 'react';
import type { FactorId } from '../../engine/study/rules.ts';
import { FACTOR_LABELS } from '../../engine/study/rules.ts';
import type { SavedStudy, StudySettings } from '../../engine/study/types.ts';
import type { Threshold } from '../../engine/study/decision.ts';
import { useApp } from '../state/appContext.ts';
import { DEFAULT_SETTINGS } from '../state/document.ts';
import { IntervalChart, LineChart } from '../components/charts.tsx';
import { CheckField, NumberField, SelectField, TextField } from '../components/fields.tsx';
import { num, pct, secs } from '../components/format.ts';
import { VerdictMark } from '../components/verdict.tsx';
import type { ScreenId } from '../App.tsx';

const SHORT: Record<string, string> = {
  stochVol: 'Stochastic vol',
  domesticRate: 'Domestic rate',
  foreignRate: 'Foreign rate',
};

/** Hedge ratios with the move they are quoted per (as the study computes them). */
const GREEK_LABEL: Record<'delta' | 'vega' | 'rho', string> = {
  delta: 'delta, per 1% spot',
  vega: 'vega, per vol point',
  rho: 'rho, per bp of the domestic curve',
};

function factorName(f: string): string {
  return SHORT[f] ?? f;
}

function longName(f: string): string {
  return FACTOR_LABELS[f as FactorId] ?? f;
}

export function TriageScreen(props: { goTo(s: ScreenId): void }) {
  const { doc, task, served } = useApp();
  const canRun = served.has('study.run');
  return (
    <div className="screen triage">
      <div className="two-col">
        <aside className="side-panel" aria-label="Run settings">
          <RunPanel canRun={canRun} />
        </aside>
        <section className="results" aria-label="Results">
          {task.kind === 'failed' && task.op === 'run' && (
            <div className="banner banner-error" role="alert" data-testid="run-error">
              <strong>The study did not run.</strong> {task.error.message}
              {task.error.issues.length > 0 && (
                <ul>
                  {task.error.issues.slice(0, 6).map((i, k) => (
                    <li key={k}>{i.message}</li>
                  ))}
                </ul>
              )}
            </div>
          )}
          {task.kind === 'cancelled' && task.op === 'run' && (
            <div className="banner" role="status" data-testid="run-cancelled">
              Run cancelled. The previous results (if any) are still shown; nothing you entered was changed.
            </div>
          )}
          {doc.study ? (
            <StudyResults study={doc.study} stale={doc.stale} />
          ) : (
            <div className="empty-state">
              <h2>No study yet</h2>
              <p>
                Describe the payoff on the{' '}
                <button className="link" onClick={() => props.goTo('deal')}>
                  Deal
                </button>{' '}
                screen, check the{' '}
                <button className="link" onClick={() => props.goTo('market')}>
                  Market
                </button>
                , then run the study with the settings on the left — or open a saved study.
              </p>
            </div>
          )}
        </section>
      </div>
    </div>
  );
}

function RunPanel(props: { canRun: boolean }) {
  const { doc, dispatch, task, runStudy, cancelTask } = useApp();
  const s = doc.settings;
  const set = (patch: Partial<StudySettings>): void =>
    dispatch({ type: 'setSettings', settings: { ...s, ...patch } });
  const th = s.threshold;
  const setTh = (t: Threshold): void => set({ threshold: t });
  const running = task.kind === 'running' && task.op === 'run';
  const g = s.greeks;
  return (
    <div className="run-panel">
      <h2>Run</h2>
      <div className="run-buttons">
        {running ? (
          <button className="primary danger" onClick={cancelTask} data-testid="cancel-run">
            Cancel run
          </button>
        ) : (
          <button
            className="primary"
            onClick={runStudy}
            disabled={!props.canRun || task.kind === 'running'}
            data-testid="run-study"
            title="Run the study (Ctrl+Enter)"
          >
            Run study
          </button>
        )}
      </div>
      {!props.canRun && (
        <p className="msg-warn">
          This build's engine does not run studies yet; saved studies can still be opened and reviewed.
        </p>
      )}
      {running && (
        <div
          className="progress"
          role="progressbar"
          aria-valuemin={0}
          aria-valuemax={100}
          aria-valuenow={Math.round(task.progress.fraction * 100)}
          data-testid="run-progress"
        >
          <div className="progress-bar" style={{ width: `${Math.round(task.progress.fraction * 100)}%` }} />
          <div className="progress-text">
            {Math.round(task.progress.fraction * 100)}% · {task.progress.stage}
            {task.progress.detail ? ` · ${task.progress.detail}` : ''}
          </div>
        </div>
      )}
      <fieldset>
        <legend>Materiality threshold τ</legend>
        <SelectField
          label="Stated as"
          path="settings.threshold.kind"
          value={th.kind}
          options={[
            { value: 'bp', label: 'basis points of notional' },
            { value: 'amount', label: `amount in ${doc.deal?.currency ?? 'deal currency'}` },
            { value: 'bidOffer', label: 'share of the bid–offer width' },
          ]}
          onChange={(k) =>
            setTh(
              k === 'bp'
                ? { kind: 'bp', value: 10 }
                : k === 'amount'
                  ? { kind: 'amount', value: 1000 }
                  : { kind: 'bidOffer', fraction: 0.25, width: 10000 },
            )
          }
        />
        {th.kind === 'bp' && (
          <NumberField
            label="τ (bp of notional)"
            path="settings.threshold.value"
            value={th.value}
            rule={{ above: 0 }}
            hint="e.g. 10"
            onCommit={(v) => setTh({ kind: 'bp', value: v })}
          />
        )}
        {th.kind === 'amount' && (
          <NumberField
            label={`τ (${doc.deal?.currency ?? ''})`}
            path="settings.threshold.value"
            value={th.value}
            rule={{ above: 0 }}
            onCommit={(v) => setTh({ kind: 'amount', value: v })}
          />
        )}
        {th.kind === 'bidOffer' && (
          <>
            <NumberField
              label="Share of the width"
              path="settings.threshold.fraction"
              value={th.fraction}
              rule={{ above: 0, max: 1 }}
              onCommit={(v) => setTh({ ...th, fraction: v })}
            />
            <NumberField
              label="Bid–offer width"
              path="settings.threshold.width"
              value={th.width}
              rule={{ above: 0 }}
              onCommit={(v) => setTh({ ...th, width: v })}
            />
          </>
        )}
      </fieldset>
      <fieldset>
        <legend>Paths and looks</legend>
        <NumberField
          label="Final paths"
          path="settings.paths"
          value={s.paths}
          rule={{ integer: true, above: 0 }}
          onCommit={(v) => set({ paths: v })}
        />
        <NumberField
          label="Paths at the first look"
          path="settings.firstPaths"
          value={s.firstPaths}
          rule={{ integer: true, above: 0 }}
          hint="looks double from here"
          onCommit={(v) => set({ firstPaths: v })}
        />
        <NumberField
          label="Paths per batch"
          path="settings.batchSize"
          value={s.batchSize}
          rule={{ integer: true, above: 0 }}
          onCommit={(v) => set({ batchSize: v })}
        />
        <TextField
          label="Seed"
          path="settings.seed"
          value={String(s.seed)}
          check={(v) => (v.trim() === '' ? 'Seed must not be empty: any text or whole number' : null)}
          onChange={(v) => set({ seed: /^\d{1,15}$/.test(v) ? Number(v) : v })}
        />
      </fieldset>
      <fieldset>
        <legend>Method</legend>
        <SelectField
          label="Heston scheme"
          path="settings.scheme"
          value={s.scheme}
          options={[
            { value: 'qe', label: 'QE with martingale correction' },
            { value: 'euler', label: 'Full-truncation Euler' },
          ]}
          onChange={(v) => set({ scheme: v })}
        />
        <NumberField
          label="Largest time step (years)"
          path="settings.maxStep"
          value={s.maxStep}
          rule={{ above: 0, max: 1 }}
          onCommit={(v) => set({ maxStep: v })}
        />
        <NumberField
          label="Error rate α (all looks, all factors)"
          path="settings.alpha"
          value={s.alpha}
          rule={{ above: 0, max: 0.49 }}
          onCommit={(v) => set({ alpha: v })}
        />
        <SelectField
          label="Alpha spending"
          path="settings.spending"
          value={s.spending}
          options={[
            { value: 'obrienFleming', label: "O'Brien–Fleming type" },
            { value: 'pocock', label: 'Pocock type' },
          ]}
          onChange={(v) => set({ spending: v })}
        />
        <SelectField
          label="Calibration"
          path="settings.calibration"
          value={s.calibration}
          options={[
            { value: 'fair', label: 'Fair: every variant refitted' },
            { value: 'naive', label: 'Naive: factor added, no refit' },
          ]}
          onChange={(v) => set({ calibration: v })}
        />
        <CheckField
          label="Local-vol diagnostic (smile vs dynamics)"
          path="settings.localVol"
          value={s.localVol}
          onChange={(v) => set({ localVol: v })}
        />
        <NumberField
          label="Share of paths for step halving, sweeps and other dates"
          path="settings.auxiliaryFraction"
          value={s.auxiliaryFraction}
          rule={{ above: 0, max: 1 }}
          onCommit={(v) => set({ auxiliaryFraction: v })}
        />
        <div className="field">
          <span className="group-label">
            Also simulate, to confirm the rules (factors they call not needed)
          </span>
          {(['stochVol', 'domesticRate', 'foreignRate'] as const).map((f) => (
            <CheckField
              key={f}
              label={factorName(f)}
              path={`settings.extraCandidates.${f}`}
              value={s.extraCandidates.includes(f)}
              onChange={(on) =>
                set({
                  extraCandidates: on
                    ? [...s.extraCandidates.filter((x) => x !== f), f]
                    : s.extraCandidates.filter((x) => x !== f),
                })
              }
            />
          ))}
        </div>
      </fieldset>
      <fieldset>
        <legend>Hedge ratios</legend>
        <CheckField
          label="Test delta, vega and rho too"
          path="settings.greeks"
          value={g !== null}
          onChange={(v) => set({ greeks: v ? DEFAULT_SETTINGS.greeks : null })}
        />
        {g && (
          <>
            <NumberField
              label="Delta threshold (bp of notional, per 1% spot)"
              path="settings.greeks.deltaThreshold"
              value={g.deltaThreshold}
              rule={{ above: 0 }}
              onCommit={(v) => set({ greeks: { ...g, deltaThreshold: v } })}
            />
            <NumberField
              label="Vega threshold (bp of notional, per vol point)"
              path="settings.greeks.vegaThreshold"
              value={g.vegaThreshold}
              rule={{ above: 0 }}
              onCommit={(v) => set({ greeks: { ...g, vegaThreshold: v } })}
            />
            <NumberField
              label="Rho threshold (bp of notional, per bp of rate)"
              path="settings.greeks.rhoThreshold"
              value={g.rhoThreshold}
              rule={{ above: 0 }}
              onCommit={(v) => set({ greeks: { ...g, rhoThreshold: v } })}
            />
          </>
        )}
      </fieldset>
      <fieldset>
        <legend>Correlation sweeps</legend>
        <CheckField
          label="Sweep unquoted correlations over their ranges"
          path="settings.sweeps"
          value={s.sweeps !== null}
          onChange={(v) => set({ sweeps: v ? { points: 5 } : null })}
        />
        {s.sweeps && (
          <NumberField
            label="Points per sweep"
            path="settings.sweeps.points"
            value={s.sweeps.points}
            rule={{ integer: true, min: 2, max: 21 }}
            onCommit={(v) => set({ sweeps: { points: v } })}
          />
        )}
        <p className="hint">The ranges themselves are part of the market (Market screen, correlation).</p>
      </fieldset>
    </div>
  );
}

function answerSentence(s: SavedStudy): string {
  const keep = s.verdicts
    .filter((v) => v.verdict === 'keep' || v.verdict === 'required')
    .map((v) => factorName(v.factor).toLowerCase());
  const drop = s.verdicts
    .filter((v) => v.verdict === 'drop' || v.verdict === 'notNeeded')
    .map((v) => factorName(v.factor).toLowerCase());
  const und = s.verdicts
    .filter((v) => v.verdict === 'undecided')
    .map((v) => factorName(v.factor).toLowerCase());
  const parts: string[] = [];
  if (keep.length) parts.push(`needs ${keep.join(' and ')}`);
  if (drop.length) parts.push(`can do without ${drop.join(' and ')}`);
  if (und.length) parts.push(`cannot yet tell about ${und.join(' and ')} at this path budget`);
  return parts.length ? `This deal ${parts.join('; ')}.` : 'The study produced no factor verdicts.';
}

/** The results of one study; memoised so progress updates during a run do not redraw them. */
const StudyResults = memo(function StudyResults(props: { study: SavedStudy; stale: boolean }) {
  const s = props.study;
  const ccy = s.input.deal.currency;
  const r = s.results;
  const tau = r.tau;
  const looks = r.looks;
  return (
    <div className="study-results" data-testid="study-results">
      <header className="answer">
        <h1>{s.input.deal.name}</h1>
        <p className="answer-line" data-testid="answer">
          {answerSentence(s)}
        </p>
        <p className="muted">
          Recommended model: <strong>{s.recommended.summary}</strong> · τ = {num(tau, 4)} {ccy} ·{' '}
          {looks[looks.length - 1]?.paths ?? '—'} paths · seed {String(s.input.settings.seed)}
        </p>
        {props.stale && (
          <p className="msg-warn">
            The inputs were edited after this run: run the study again to update the verdicts.
          </p>
        )}
      </header>

      <div className="verdict-grid" role="list" aria-label="Verdict per factor">
        {s.verdicts.map((v) => {
          const d = v.decision;
          return (
            <article
              key={v.factor}
              className={`verdict-card vc-${v.verdict}`}
              role="listitem"
              data-testid={`verdict-${v.factor}`}
            >
              <div className="vc-head">
                <VerdictMark verdict={v.verdict} large />
                <span className="vc-factor">{factorName(v.factor)}</span>
              </div>
              <div className="vc-long">{longName(v.factor)}</div>
              {d ? (
                <dl className="vc-nums">
                  <dt title="price change from switching the factor off, ± z·SE">Δ price ± z·SE</dt>
                  <dd>
                    {num(d.delta, 4)} ± {num(d.z * d.se, 3)} {ccy}
                  </dd>
                  <dt>error budget b</dt>
                  <dd data-testid={`budget-${v.factor}`}>
                    {num(d.budget, 3)} {ccy}
                    {((p) =>
                      p ? (
                        <span className="budget-parts">
                          step halving {num(p.stepHalving, 2)} + calibration {num(p.calibration, 2)} +
                          repricing {num(p.repricing ?? 0, 2)}
                          {p.exerciseGap === null ? '' : ` + exercise gap ${num(p.exerciseGap, 2)}`}
                        </span>
                      ) : null)(r.budgetParts?.[v.factor])}
                  </dd>
                  <dt>decided at</dt>
                  <dd>
                    {v.decidedAtLook !== null
                      ? `${looks[v.decidedAtLook]?.paths ?? '?'} paths (look ${v.decidedAtLook + 1})`
                      : 'not decided by the last look'}
                  </dd>
                </dl>
              ) : (
                <p className="vc-nums muted">Not simulated: decided by the rules.</p>
              )}
              <p className="vc-reason">{v.reason}</p>
            </article>
          );
        })}
      </div>
      {r.joint && (
        <p className="joint">
          Joint check of the reduced model against the richest:{' '}
          {r.joint.outcome === 'nothingDropped'
            ? 'nothing was dropped.'
            : `difference ${num(r.joint.difference, 4)} ± ${num(r.joint.z * r.joint.se, 3)} ${ccy} → ${r.joint.outcome}.`}
        </p>
      )}

      <section>
        <h2>Price impact of each factor</h2>
        <IntervalChart
          title="Δ = richest variant − richest without the factor"
          empty="No factor was simulated: the rules decided each one (see the cards above), so there is no price impact to plot."
          unit={ccy}
          tau={tau}
          rows={s.verdicts
            .filter((v) => v.decision)
            .map((v) => ({
              label: factorName(v.factor),
              value: v.decision!.delta,
              half: v.decision!.z * v.decision!.se,
              budget: v.decision!.budget,
              tone: v.verdict === 'keep' ? 'keep' : v.verdict === 'drop' ? 'drop' : 'undecided',
            }))}
        />
      </section>

      {r.shapley.length > 0 && (
        <section>
          <h2>Attribution over the ladder</h2>
          <p className="hint">
            Exact Shapley shares of the move from the base model to the richest one; interactions are split
            fairly.
          </p>
          <IntervalChart
            title="Shapley value per factor (± 2 SE)"
            unit={ccy}
            rows={r.shapley.map((x) => ({ label: factorName(x.factor), value: x.value, half: 2 * x.se }))}
          />
        </section>
      )}

      {r.localVol && (
        <section>
          <h2>Smile or dynamics?</h2>
          <table className="data">
            <thead>
              <tr>
                <th>Part of the stochastic-vol effect</th>
                <th className="num">Value ({ccy})</th>
                <th className="num">SE</th>
              </tr>
            </thead>
            <tbody>
              <tr>
                <td>Explained by the smile (local vol − Black–Scholes)</td>
                <td className="num">{num(r.localVol.smile.value, 4)}</td>
                <td className="num">{num(r.localVol.smile.se, 3)}</td>
              </tr>
              <tr>
                <td>Only vol dynamics explain (Heston − local vol)</td>
                <td className="num">{num(r.localVol.dynamics.value, 4)}</td>
                <td className="num">{num(r.localVol.dynamics.se, 3)}</td>
              </tr>
              <tr>
                <td>Total</td>
                <td className="num">{num(r.localVol.total.value, 4)}</td>
                <td className="num">{num(r.localVol.total.se, 3)}</td>
              </tr>
            </tbody>
          </table>
        </section>
      )}

      {r.greekVerdicts.length > 0 && (
        <section>
          <h2>Hedge ratios: does each factor move them materially?</h2>
          <p className="hint">
            Δ is the change of the hedge ratio when the factor is switched off, in {ccy}; it is kept when |Δ|
            − z·SE − b exceeds the threshold, dropped when |Δ| + z·SE + b stays below it. The budget b of
            delta and rho comes from halving the time step on the same random numbers; vega carries none.
          </p>
          <table className="data" data-testid="greek-verdicts">
            <thead>
              <tr>
                <th>Hedge ratio</th>
                <th>Factor</th>
                <th>Verdict</th>
                <th className="num">Δ ({ccy})</th>
                <th className="num">± z·SE</th>
                <th className="num">Budget b</th>
                <th className="num">Step halved: change ± SE</th>
                <th className="num">Threshold ({ccy})</th>
              </tr>
            </thead>
            <tbody>
              {r.greekVerdicts.map((gv, k) => (
                <tr key={k} data-testid={`greek-verdict-${gv.greek}-${gv.factor}`}>
                  <td>{GREEK_LABEL[gv.greek]}</td>
                  <td>{factorName(gv.factor)}</td>
                  <td>
                    <VerdictMark verdict={gv.decision.verdict} />
                  </td>
                  <td className="num">{num(gv.decision.delta, 4)}</td>
                  <td className="num">{num(gv.decision.z * gv.decision.se, 3)}</td>
                  <td className="num">{gv.stepHalvingChange ? num(gv.decision.budget, 3) : 'none'}</td>
                  <td className="num">
                    {gv.stepHalvingChange
                      ? `${num(gv.stepHalvingChange.value, 3)} ± ${num(gv.stepHalvingChange.se, 2)}`
                      : gv.greek === 'vega'
                        ? 'not checked (vega)'
                        : 'not in this file'}
                  </td>
                  <td className="num">{num(gv.threshold, 3)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      )}

      {r.greeks && r.greeks.length > 0 && (
        <section>
          <h2>Hedge ratios per variant</h2>
          <table className="data" data-testid="greeks">
            <thead>
              <tr>
                <th>Variant</th>
                <th className="num">Delta ({ccy} per 1% spot)</th>
                <th className="num">Vega ({ccy} per vol point)</th>
                <th className="num">Rho ({ccy} per bp)</th>
              </tr>
            </thead>
            <tbody>
              {r.greeks.map((gr) => (
                <tr key={gr.variant}>
                  <td>{s.ladder.find((v) => v.id === gr.variant)?.label ?? gr.variant}</td>
                  <td className="num">
                    {num(gr.delta.value, 4)} ± {num(gr.delta.se, 2)}
                  </td>
                  <td className="num">
                    {gr.vega ? `${num(gr.vega.value, 4)} ± ${num(gr.vega.se, 2)}` : '—'}
                  </td>
                  <td className="num">
                    {num(gr.rho.value, 4)} ± {num(gr.rho.se, 2)}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      )}

      {r.sweeps.length > 0 && (
        <section>
          <h2>Correlation sweeps</h2>
          <div className="chart-grid">
            {r.sweeps.map((sw) => (
              <div key={sw.pair}>
                <LineChart
                  title={`${pairName(sw.pair)} correlation: price over [${num(sw.range[0], 2)}, ${num(sw.range[1], 2)}]`}
                  xLabel="correlation"
                  yLabel={`price (${ccy})`}
                  series={[
                    {
                      name: 'richest variant',
                      points: sw.points.map((p) => ({ x: p.rho, y: p.price.value })),
                    },
                    {
                      name: '+2 SE',
                      style: 'dashed',
                      tone: 0,
                      points: sw.points.map((p) => ({ x: p.rho, y: p.price.value + 2 * p.price.se })),
                    },
                    {
                      name: '−2 SE',
                      style: 'dashed',
                      tone: 0,
                      points: sw.points.map((p) => ({ x: p.rho, y: p.price.value - 2 * p.price.se })),
                    },
                  ]}
                />
                <p className={sw.priceMovesMaterially ? 'msg-warn' : 'hint'}>
                  Band {num(sw.band, 4)} {ccy}
                  {sw.priceMovesMaterially
                    ? ' — the price moves by more than τ across the range.'
                    : ' — within τ.'}
                  {sw.materialSomewhere.length > 0 &&
                    ` Material somewhere: ${sw.materialSomewhere.map(factorName).join(', ')}.`}
                </p>
              </div>
            ))}
          </div>
        </section>
      )}

      {r.convergence.length > 0 && (
        <section>
          <h2>Convergence over the looks</h2>
          <LineChart
            title="Δ per factor against paths"
            empty="No factor was simulated, so there is nothing to follow over the looks."
            xLabel="paths (log scale)"
            yLabel={`Δ (${ccy})`}
            logX
            series={Object.keys(r.convergence[0]!.deltas).flatMap((f, i) => [
              {
                name: factorName(f),
                tone: i,
                points: r.convergence.map((c) => ({ x: c.paths, y: c.deltas[f]?.value ?? NaN })),
              },
              {
                name: `${factorName(f)} +2 SE`,
                tone: i,
                style: 'dashed' as const,
                points: r.convergence.map((c) => ({
                  x: c.paths,
                  y: (c.deltas[f]?.value ?? NaN) + 2 * (c.deltas[f]?.se ?? NaN),
                })),
              },
              {
                name: `${factorName(f)} −2 SE`,
                tone: i,
                style: 'dashed' as const,
                points: r.convergence.map((c) => ({
                  x: c.paths,
                  y: (c.deltas[f]?.value ?? NaN) - 2 * (c.deltas[f]?.se ?? NaN),
                })),
              },
            ])}
          />
        </section>
      )}

      <section>
        <h2>What each variant costs</h2>
        <table className="data" data-testid="costs">
          <thead>
            <tr>
              <th>Variant</th>
              <th>Characteristic function</th>
              <th className="num">Fit RMSE (vol bp)</th>
              <th className="num">Calibration</th>
              <th className="num">Simulation</th>
              <th className="num">Price ({ccy})</th>
            </tr>
          </thead>
          <tbody>
            {s.ladder.map((v, i) => (
              <tr key={v.id}>
                <td>{v.label}</td>
                <td>{v.calibration.characteristicFunction}</td>
                <td className="num">{num(v.calibration.rmseVol * 1e4, 3)}</td>
                <td className="num">{secs(v.calibration.seconds)}</td>
                <td className="num">{secs(s.timings.perVariant?.[v.id])}</td>
                <td className="num">
                  {r.prices[i] ? `${num(r.prices[i]!.value, 6)} ± ${num(r.prices[i]!.se, 2)}` : '—'}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
        <p className="hint">
          Model-risk range across variants that fit the market: {num(r.modelRisk.min, 6)} to{' '}
          {num(r.modelRisk.max, 6)} {ccy} (spread {num(r.modelRisk.spread, 4)}). Whole run{' '}
          {secs(s.timings.total)} on {s.timings.workers} worker(s).
        </p>
      </section>

      {s.analysis.exercise.present && <ExerciseSection study={s} />}

      {(s.warnings.length > 0 || s.limitations.length > 0) && (
        <section>
          <h2>Warnings and limitations</h2>
          <ul className="tight">
            {s.warnings.map((w, k) => (
              <li key={`w${k}`} className="msg-warn">
                {w}
              </li>
            ))}
            {s.limitations.map((w, k) => (
              <li key={`l${k}`}>{w}</li>
            ))}
          </ul>
        </section>
      )}
    </div>
  );
});

/** Early exercise (callable or puttable deals): exercise probability per date and the bounds, per variant. */
function ExerciseSection(props: { study: SavedStudy }) {
  const s = props.study;
  const ccy = s.input.deal.currency;
  const ex = s.analysis.exercise;
  const withEx = s.ladder.filter((v) => v.exercise);
  return (
    <section>
      <h2>Early exercise</h2>
      <p className="hint">
        Exercise rights held by the {ex.holders.join(' and ')} on {ex.times.length} date(s): {ex.reason}
      </p>
      {withEx.length === 0 ? (
        <p className="msg-warn">
          This study file holds no exercise estimates (it was written before they were part of a study).
        </p>
      ) : (
        <>
          <LineChart
            title="Probability of exercise at each date"
            xLabel="years"
            yLabel="probability"
            yFormat={(v) => `${Math.round(v * 100)}%`}
            series={withEx.map((v) => ({
              name: v.label,
              points: v.exercise!.exerciseProbability.map((d) => ({ x: d.time, y: d.probability })),
            }))}
          />
          <table className="data" data-testid="exercise-table">
            <thead>
              <tr>
                <th>Variant</th>
                <th className="num">Policy value ({ccy})</th>
                <th className="num">Dual upper bound</th>
                <th className="num">Gap</th>
                <th className="num">Never exercised</th>
              </tr>
            </thead>
            <tbody>
              {withEx.map((v) => {
                const e = v.exercise!;
                return (
                  <tr key={v.id}>
                    <td>{v.label}</td>
                    <td className="num">
                      {num(e.primal.value, 6)} ± {num(e.primal.se, 2)}
                    </td>
                    <td className="num">{e.dual ? num(e.dual.value, 6) : '—'}</td>
                    <td className="num">
                      {e.dual ? `${num(e.dual.gap, 3)} ± ${num(e.dual.gapSe, 2)}` : '—'}
                    </td>
                    <td className="num">{pct(e.neverExercised, 1)}</td>
                  </tr>
                );
              })}
            </tbody>
          </table>
          {withEx[0]!.exercise!.biasNote && <p className="hint">{withEx[0]!.exercise!.biasNote}</p>}
        </>
      )}
    </section>
  );
}
