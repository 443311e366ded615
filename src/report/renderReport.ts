/**
 * The study report: one self-contained, printable HTML page (inline CSS and SVG, no scripts, no external assets)
 * built from a saved study. The answer comes first, then the evidence, then what to reproduce and what it cannot
 * tell you.
 */
import type { SavedStudy, FactorVerdict } from '../engine/study/types.ts';
import { FACTOR_LABELS, type FactorId } from '../engine/study/rules.ts';
import { esc, fmt, pct } from './format.ts';
import { intervalChart, lineChart } from './svg.ts';

/** The caution every report carries (also printed by the command line). */
export const CAUTION =
  'This report informs a pricing-model decision. It is not investment advice and does not replace the ' +
  "firm's model validation: model choice remains subject to your model-risk policy and independent review.";

const COLOURS: Record<string, string> = {
  keep: '#0f766e',
  drop: '#64748b',
  undecided: '#b45309',
  required: '#4338ca',
  notNeeded: '#94a3b8',
};
const SERIES = ['#0f766e', '#b45309', '#4338ca', '#be123c', '#0369a1', '#4d7c0f', '#7c3aed', '#a16207'];

const VERDICT_TEXT: Record<string, string> = {
  keep: 'keep',
  drop: 'drop',
  undecided: 'undecided',
  required: 'required',
  notNeeded: 'not needed',
};

function badge(v: string): string {
  return `<span class="badge" style="background:${COLOURS[v] ?? '#475569'}">${esc(VERDICT_TEXT[v] ?? v)}</span>`;
}

function table(head: string[], rows: string[][], cls = ''): string {
  return `<table class="${cls}"><thead><tr>${head.map((h) => `<th>${h}</th>`).join('')}</tr></thead><tbody>${rows
    .map((r) => `<tr>${r.map((c) => `<td>${c}</td>`).join('')}</tr>`)
    .join('')}</tbody></table>`;
}

function label(f: string): string {
  return FACTOR_LABELS[f as FactorId] ?? f;
}

function answerSentence(s: SavedStudy): string {
  const by = (v: string) => s.verdicts.filter((x) => x.verdict === v).map((x) => label(x.factor));
  const parts: string[] = [];
  const req = by('required');
  const keep = by('keep');
  const drop = by('drop');
  const und = by('undecided');
  if (req.length) parts.push(`required by the payoff: ${req.join(', ')}`);
  if (keep.length) parts.push(`material, keep: ${keep.join(', ')}`);
  if (drop.length) parts.push(`immaterial, drop: ${drop.join(', ')}`);
  if (und.length) parts.push(`not yet decided at this path count: ${und.join(', ')}`);
  if (parts.length === 0) parts.push('no stochastic factor beyond the base model is indicated');
  return parts.join('; ') + '.';
}

function verdictRow(s: SavedStudy, v: FactorVerdict): string[] {
  const d = v.decision;
  const z = d?.z ?? 0;
  return [
    esc(label(v.factor)),
    esc(v.status === 'notNeeded' ? 'not needed' : v.status),
    badge(v.verdict),
    d ? fmt(d.delta) : '—',
    d ? `${fmt(d.delta - z * d.se)} … ${fmt(d.delta + z * d.se)}` : '—',
    d ? fmt(d.budget) : '—',
    fmt(s.results.tau),
    v.decidedAtLook === null
      ? d
        ? 'not decided'
        : '—'
      : fmt(s.results.looks[v.decidedAtLook]?.paths ?? 0, 8),
    esc(v.reason),
  ];
}

const CSS = `
:root{--ink:#1e293b;--muted:#64748b;--line:#e2e8f0;--panel:#f8fafc;--accent:#0f766e}
*{box-sizing:border-box}body{font:14px/1.5 system-ui,-apple-system,"Segoe UI",sans-serif;color:var(--ink);margin:0;background:#fff}
main{max-width:980px;margin:0 auto;padding:28px 32px 64px}
header.top{border-bottom:3px solid var(--accent);padding-bottom:12px;margin-bottom:18px}
header.top h1{font-size:22px;margin:0 0 4px}header.top .meta{color:var(--muted);font-size:12.5px}
h2{font-size:17px;margin:30px 0 8px;padding-top:8px;border-top:1px solid var(--line)}
h3{font-size:14.5px;margin:18px 0 6px}
.answer{background:var(--panel);border:1px solid var(--line);border-left:5px solid var(--accent);padding:14px 18px;border-radius:6px}
.answer p.big{font-size:16px;margin:4px 0 10px}
.caution{border:1px solid #fcd34d;background:#fffbeb;padding:10px 14px;border-radius:6px;font-size:13px;margin:14px 0}
table{border-collapse:collapse;width:100%;margin:8px 0 12px;font-size:12.8px}
th,td{border-bottom:1px solid var(--line);padding:5px 8px;text-align:left;vertical-align:top}
th{background:var(--panel);font-weight:600}td.num,th.num{text-align:right;font-variant-numeric:tabular-nums}
.badge{color:#fff;border-radius:10px;padding:1px 9px;font-size:12px;font-weight:600;white-space:nowrap}
figure{margin:10px 0 16px}figure svg{width:100%;height:auto;max-width:680px;display:block}
figcaption{color:var(--muted);font-size:12px}
.plot-bg{fill:#fff;stroke:var(--line)}.grid{stroke:#eef2f7}.zone{fill:#e2e8f0;opacity:.6}
.tick{font-size:10px;fill:var(--muted)}.axis{font-size:11px;fill:var(--ink)}.legend{font-size:11px}
.muted{color:var(--muted)}.wide{overflow-x:auto}code{background:var(--panel);padding:1px 4px;border-radius:3px;font-size:12px}
ul.tight li{margin:2px 0}
@media print{main{padding:0}h2{break-after:avoid}figure,table{break-inside:avoid}.answer{break-inside:avoid}}
`;

/** Renders the saved study as a self-contained HTML document. */
export function renderReport(s: SavedStudy): string {
  const deal = s.input.deal;
  const mkt = s.input.markets[0]!;
  const set = s.input.settings;
  const ccy = deal.currency;
  const sec: string[] = [];

  // 1. The question and the answer
  const joint = s.results.joint;
  const jointText = !joint
    ? ''
    : joint.outcome === 'nothingDropped'
      ? 'No factor was dropped, so the reduced model is the richest one.'
      : `Joint check of the reduced model (without ${joint.dropped.map(label).join(', ')}) against the richest: ` +
        `difference ${fmt(joint.difference)} ${esc(ccy)} ± ${fmt(joint.z * joint.se)} (z·SE), budget ${fmt(joint.budget)}${
          joint.budgetParts
            ? ` (step halving ${fmt(joint.budgetParts.stepHalving, 3)}, calibration ${fmt(joint.budgetParts.calibration, 3)}, repricing ${fmt(joint.budgetParts.repricing ?? null, 3)}${joint.budgetParts.exerciseGap === null ? '' : `, exercise gap ${fmt(joint.budgetParts.exerciseGap, 3)}`})`
            : ''
        }: ` +
        `<strong>${esc(joint.outcome)}</strong>.`;
  sec.push(`<section class="answer"><h2 style="border:0;margin-top:0">Which stochastic factors does this deal need?</h2>
<p class="big">${esc(answerSentence(s))}</p>
<p>Recommended model: <strong>${esc(s.recommended.summary)}</strong>. ${jointText}</p>
${table(
  [
    'Factor',
    'Rules',
    'Verdict',
    `Δ (${esc(ccy)})`,
    'Interval Δ ± z·SE',
    'Budget b',
    'Threshold τ',
    'Decided at paths',
    'Why',
  ],
  s.verdicts.map((v) => verdictRow(s, v)),
)}
<p class="muted">Δ = price of the richest variant minus the richest variant without the factor, on the same random numbers.
Keep if |Δ| − z·SE − b &gt; τ; drop if |Δ| + z·SE + b &lt; τ; otherwise undecided. z controls the error rate (α = ${fmt(
    set.alpha,
  )}) over ${s.results.looks.length} looks and all factors (${esc(
    set.spending === 'pocock' ? 'Pocock-type' : "O'Brien–Fleming-type",
  )} alpha spending, Lan &amp; DeMets 1983; Holm 1979 across factors).</p></section>
<div class="caution">${esc(CAUTION)}</div>`);

  // 2. Deal
  const a = s.analysis;
  sec.push(`<h2>Deal</h2>${table(
    ['Name', 'Notional', 'Currency', 'Last date (years)', 'Underlyings'],
    [
      [
        esc(deal.name),
        fmt(deal.notional, 10),
        esc(ccy),
        fmt(a.lastTime, 4),
        esc(
          Object.entries(deal.underlyings ?? {})
            .map(([k, u]) => `${k} (${u.kind === 'equity' ? u.currency : `${u.units} per ${u.per}`})`)
            .join(', '),
        ),
      ],
    ],
  )}
${deal.description ? `<p>${esc(deal.description)}</p>` : ''}
<h3>What the rules read in the payoff</h3><ul class="tight">${(a.reasons ?? []).map((r) => `<li>${esc(r)}</li>`).join('') || '<li>nothing beyond a plain payoff</li>'}</ul>
${table(
  ['Factor group', 'Rules', 'Reason'],
  s.rules.factors.map((f) => [esc(label(f.factor)), badge(f.status), esc(f.reason)]),
)}
${s.rules.notes.length ? `<ul class="tight">${s.rules.notes.map((n) => `<li>${esc(n)}</li>`).join('')}</ul>` : ''}`);

  // 3. Market
  const eqRows = Object.entries(mkt.equities ?? {}).map(([n, e]) => [
    esc(n),
    esc(e.currency),
    fmt(e.spot),
    pct(e.divYield),
    `${e.vols.expiries.length} × ${(e.vols.moneyness ?? e.vols.strikes ?? []).length}`,
  ]);
  sec.push(`<h2>Market</h2><p>Snapshot ${esc(mkt.date)}${mkt.name ? ` — ${esc(mkt.name)}` : ''}; ${s.input.markets.length} snapshot(s) in the study.</p>
${table(['Equity', 'Currency', 'Spot', 'Dividend yield', 'Vol grid (expiries × strikes)'], eqRows)}
${table(
  ['Curve', 'Pillars', 'Shortest zero', 'Longest zero'],
  Object.entries(mkt.curves ?? {}).map(([c, cv]) => [
    esc(c),
    String(cv.times.length),
    cv.zeroRates ? pct(cv.zeroRates[0]!) : '—',
    cv.zeroRates ? pct(cv.zeroRates[cv.zeroRates.length - 1]!) : '—',
  ]),
)}`);

  // 4. Calibration fit
  const fitRows = s.ladder.map((v) => [
    esc(v.label),
    esc(v.calibration.characteristicFunction),
    fmt(v.calibration.rmseVol * 1e4, 3),
    fmt(v.calibration.maxAbsVolError * 1e4, 3),
    fmt(v.calibration.seconds, 3),
    esc(
      Object.entries(v.calibration.feller)
        .map(([k, f]) => `${k}: ${fmt(f, 3)}${f < 1 ? ' (Feller fails)' : ''}`)
        .join(', ') || '—',
    ),
  ]);
  const fitPlots = s.ladder
    .filter((v) => v.calibration.fit.filter((f) => !f.mcError).length > 1)
    .slice(0, 8)
    .map((v) =>
      lineChart({
        title: `${v.label}: market and model vols per calibration instrument`,
        xLabel: 'instrument number',
        yLabel: 'vol',
        series: [
          {
            name: 'market',
            colour: SERIES[0]!,
            points: v.calibration.fit.map((f, i) => ({ x: i + 1, y: f.marketVol })),
          },
          {
            name: 'model',
            colour: SERIES[1]!,
            dashed: true,
            points: v.calibration.fit.filter((f) => !f.mcError).map((f, i) => ({ x: i + 1, y: f.modelVol })),
          },
        ],
      }),
    )
    .join('');
  const judged = (f: { mcError: { value: number; se: number } | null; calibrated?: boolean }) =>
    f.calibrated === false
      ? 'not fitted by this variant'
      : Math.abs(f.mcError!.value) <= 3 * f.mcError!.se
        ? 'within 3 SE'
        : '<strong>outside 3 SE</strong>';
  const mcSummary = s.ladder
    .filter((v) => v.calibration.fit.some((f) => f.mcError))
    .map((v) => {
      const rows = v.calibration.fit.filter(
        (f) => f.mcError && (f as { calibrated?: boolean }).calibrated !== false,
      );
      const worst = rows.reduce(
        (m, f) => Math.max(m, Math.abs(f.mcError!.value) / Math.max(f.mcError!.se, 1e-300)),
        0,
      );
      const inside = rows.filter((f) => Math.abs(f.mcError!.value) <= 3 * f.mcError!.se).length;
      return [esc(v.label), String(rows.length), `${inside} of ${rows.length}`, fmt(worst, 3)];
    });
  const mcRows = s.ladder.flatMap((v) =>
    v.calibration.fit
      .filter((f) => f.mcError)
      .map((f) => [
        esc(v.label),
        esc(f.instrument),
        fmt(f.mcError!.value),
        fmt(f.mcError!.se),
        judged(f as never),
      ]),
  );
  const rep = s.results.repricing;
  const repricingTable = rep
    ? `<p class="muted">In implied vol: each variant's largest |σ<sub>MC</sub> − σ<sub>market</sub>| − 2·SE<sub>σ</sub> over its calibrated vanillas (zero when all reprice within two SE), the quantity the repricing part of the error budget turns into price with the deal's vega. Caplets are judged the same way in normal vol but stay out of the budget (the study has no deal sensitivity to rate vols).</p>` +
      table(
        [
          'Variant',
          'Vanillas judged',
          'Vol error beyond 2 SE (vol bp)',
          'Set by',
          'Caplets: normal vol beyond 2 SE (bp)',
        ],
        s.ladder
          .filter((v) => rep[v.id])
          .map((v) => {
            const x = rep[v.id]!;
            return [
              esc(v.label),
              String(x.quotes),
              `${fmt(x.volExcess * 1e4, 3)}${x.inBudget === false ? ' (shown only: a naive variant’s miscalibration, which its Δ measures)' : ''}`,
              esc(x.instrument ?? '—'),
              x.capletNormalVolExcess === null ? '—' : fmt(x.capletNormalVolExcess * 1e4, 3),
            ];
          }),
      )
    : '';
  sec.push(`<h2>Calibration fit</h2>
${table(['Variant', 'Characteristic function', 'RMSE (vol bp)', 'Max error (vol bp)', 'Time (s)', 'Feller ratio 2κθ/σ²'], fitRows)}
${fitPlots}
<h3>Evidence of fairness: each variant reprices its own instruments on the study's paths</h3>
<p class="muted">Monte Carlo price minus market price of each vanilla, per unit of the underlying, with its standard error. A Black–Scholes variant is fitted at one strike per expiry (the ATM forward unless the settings name one); its other rows show the smile it does not fit.</p>
${
  mcSummary.length
    ? table(['Variant', 'Instruments fitted', 'Within 3 SE', 'Worst |error| / SE'], mcSummary) +
      repricingTable +
      `<details><summary>Every repriced vanilla</summary>${table(['Variant', 'Instrument', 'MC − market', 'SE', 'Judgement'], mcRows)}</details>`
    : '<p class="muted">No Monte Carlo repricing was stored.</p>'
}`);

  // 5. Ladder
  sec.push(`<h2>Ladder</h2>${table(
    ['Variant', 'Factors', `Price (${esc(ccy)})`, 'SE', 'Role'],
    s.ladder.map((v, i) => {
      const p = s.results.prices[i];
      return [
        esc(v.label),
        esc(v.factors.map(label).join(' + ') || 'base'),
        p ? fmt(p.value, 7) : '—',
        p ? fmt(p.se, 3) : '—',
        esc(v.role),
      ];
    }),
  )}
<p>Model-risk range over variants that fit the market: ${fmt(s.results.modelRisk.min, 7)} … ${fmt(
    s.results.modelRisk.max,
    7,
  )} (spread ${fmt(s.results.modelRisk.spread)} ${esc(ccy)}, variants ${esc(s.results.modelRisk.variants.join(', '))}).</p>`);

  // 5b. Early exercise
  const ex = s.ladder.filter((v) => v.exercise);
  if (ex.length)
    sec.push(`<h2>Early exercise</h2>
<p class="muted">Each variant exercises the deal's right by its own Longstaff–Schwartz (2001) policy, fitted on separate regression paths; the Andersen–Broadie (2004) dual gives the other bound. The gap between the two enters the error budget of every Δ that involves the variant. ${esc(ex[0]!.exercise!.biasNote)}</p>
${table(
  ['Variant', 'Policy estimate', 'SE', 'Dual bound', 'Gap', 'Gap SE', 'Never exercised'],
  ex.map((v) => {
    const e = v.exercise!;
    return [
      esc(v.label),
      fmt(e.primal.value, 8),
      fmt(e.primal.se, 3),
      e.dual ? fmt(e.dual.value, 8) : '—',
      e.dual ? fmt(e.dual.gap, 4) : '—',
      e.dual ? fmt(e.dual.gapSe, 3) : '—',
      pct(e.neverExercised, 1),
    ];
  }),
)}`);

  // 6. Δ with intervals
  const withD = s.verdicts.filter((v) => v.decision);
  sec.push(`<h2>Factor impact with confidence intervals</h2>
${intervalChart({
  title: 'Δ per factor: point, ± z·SE (bar) against the immaterial zone |Δ| < τ (shaded)',
  unit: `Δ (${ccy})`,
  tau: s.results.tau,
  rows: withD.map((v) => ({
    label: v.factor,
    value: v.decision!.delta,
    lo: v.decision!.delta - v.decision!.z * v.decision!.se - v.decision!.budget,
    hi: v.decision!.delta + v.decision!.z * v.decision!.se + v.decision!.budget,
    colour: COLOURS[v.verdict] ?? '#475569',
  })),
})}
${table(
  [
    'Factor',
    'Δ',
    'SE',
    'z',
    'Budget b',
    'of which step halving',
    'calibration',
    'repricing',
    'exercise gap',
    'change on the halved grid ± SE',
  ],
  withD.map((v) => {
    const c = s.results.stepHalvingChange?.[v.factor];
    const parts = s.results.budgetParts?.[v.factor];
    return [
      esc(label(v.factor)),
      fmt(v.decision!.delta),
      fmt(v.decision!.se, 3),
      fmt(v.decision!.z, 4),
      fmt(v.decision!.budget, 3),
      fmt(parts?.stepHalving ?? s.results.stepHalving[v.factor] ?? null, 3),
      fmt(parts?.calibration ?? null, 3),
      parts ? fmt(parts.repricing ?? null, 3) : '—',
      parts ? (parts.exerciseGap === null ? 'n/a' : fmt(parts.exerciseGap, 3)) : '—',
      c ? `${fmt(c.value, 3)} ± ${fmt(c.se, 3)}` : '—',
    ];
  }),
)}
<p class="muted">The budget b adds what Monte Carlo noise does not cover, for the richest variant and the variant without the factor:
<strong>step halving</strong>, the change of Δ when every time step is cut in two on the same random numbers, beyond two of its
own standard errors; <strong>calibration</strong>, |deal vega| times each variant's largest analytic vol fit error over the quotes expiring by the deal's last date;
<strong>repricing</strong>, |deal vega| times each variant's largest error when it reprices its own calibrated vanillas on the
study's paths, in implied vol beyond two standard errors (SE of the vol = price SE / Black–Scholes vega), so a simulated
model that misses its instruments by more than its analytic fit says (an approximate characteristic function, a scheme
bias at the quotes) widens the interval; <strong>exercise gap</strong>, the gap between the exercise policy's value and its
dual bound. The parts overlap where a variant's simulated error is its analytic fit error seen again: adding them is
conservative.${s.results.budgetParts ? '' : ' This study was written before the parts were recorded: only the step-halving part is shown.'}</p>`);

  // 6b. What would decide the undecided factors
  const wwd = s.results.whatWouldDecide;
  if (wwd && Object.keys(wwd).length) {
    const partName: Record<string, string> = {
      stepHalving: 'step halving',
      calibration: 'calibration',
      repricing: 'repricing',
      exerciseGap: 'exercise gap',
      noise: 'noise z·SE',
    };
    const target = (it: NonNullable<typeof wwd>[string]['items'][number]): string => {
      if (it.part === 'stepHalving')
        return it.maxStep == null ? 'no step can' : `largest step ≤ ${fmt(it.maxStep * 365, 3)} days`;
      if (it.part === 'noise') return it.paths == null ? 'no path count can' : `${fmt(it.paths, 10)} paths`;
      if (it.part === 'calibration' || it.part === 'repricing')
        return it.targetVolError == null
          ? 'not alone'
          : `vol errors summing below ${fmt(it.targetVolError * 100, 3)} vol points`;
      if (it.room <= 0) return 'not alone';
      return typeof it.outerPaths === 'number'
        ? `${fmt(it.outerPaths, 10)} outer paths`
        : 'a better policy or more inner paths';
    };
    sec.push(`<h2>What would decide the undecided factors</h2>
<p class="muted">An undecided factor's interval Δ ± (z·SE + b) still reaches τ. Each part of its half-width is shown with the room
it has if the other parts stay as they are (distance of Δ from τ minus everything else) and what would bring it into that room:
a smaller largest time step (step halving, first order in the step), a closer fit or repricing of the named variant at the named
instrument, more dual-bound paths (exercise gap), or more paths (noise, SE ∝ 1/√n at the same z). A part whose room is not
positive cannot decide the factor on its own. These are estimates to plan the next run, not verdicts.</p>
${table(
  ['Factor', 'Part', `Size (${esc(ccy)})`, 'Room', 'Would fit at', 'Where'],
  Object.entries(wwd).flatMap(([f, w]) =>
    w.items.map((it, i) => [
      i === 0 ? `${esc(label(f))}<br><span class="muted">Δ ${fmt(w.distance, 3)} from τ</span>` : '',
      i === 0 && w.largest
        ? `<strong>${esc(partName[it.part] ?? it.part)}</strong>`
        : esc(partName[it.part] ?? it.part),
      fmt(it.size, 3),
      fmt(it.room, 3),
      esc(target(it)),
      esc(
        it.variant
          ? `${it.variant}${it.instrument ? ` at ${it.instrument}` : ''}`
          : it.dualPaths
            ? `dual bound ${it.dualPaths.outer} × ${it.dualPaths.inner} paths`
            : '—',
      ),
    ]),
  ),
)}
<ul class="tight">${Object.entries(wwd)
      .map(([f, w]) => `<li><strong>${esc(label(f))}</strong>: ${esc(w.summary)}.</li>`)
      .join('')}</ul>`);
  }

  // 7. Attribution
  if (s.results.shapley.length)
    sec.push(`<h2>Attribution (exact Shapley values over the ladder)</h2>
<p class="muted">Each factor's share of the richest-minus-base price change, averaged over every order of adding factors (Shapley 1953); the shares add up to the total. Standard errors from the full covariance of the paired variant prices.</p>
${table(
  ['Factor', `Share (${esc(ccy)})`, 'SE'],
  s.results.shapley.map((x) => [esc(label(x.factor)), fmt(x.value), fmt(x.se, 3)]),
)}`);

  // 7b. Per-equity breakdown
  if (s.results.perEquity?.length)
    sec.push(`<h2>Stochastic volatility, equity by equity</h2>
<p class="muted">Richest variant minus the richest with one equity back on its Black–Scholes fit, on the same paths.</p>
${table(
  ['Equity', `Δ (${esc(ccy)})`, 'SE'],
  s.results.perEquity.map((x) => [esc(x.equity), fmt(x.delta.value), fmt(x.delta.se, 3)]),
)}`);

  // 8. Local vol
  if (s.results.localVol) {
    const lv = s.results.localVol;
    sec.push(`<h2>Local-volatility diagnostic</h2>
<p>Stochastic-vol impact (Heston − Black–Scholes, deterministic rates) split into the part the smile explains (local vol − Black–Scholes) and the part only vol dynamics explain (Heston − local vol).</p>
${table(
  ['Part', `Value (${esc(ccy)})`, 'SE'],
  [
    ['smile (LV − BS)', fmt(lv.smile.value), fmt(lv.smile.se, 3)],
    ['dynamics (Heston − LV)', fmt(lv.dynamics.value), fmt(lv.dynamics.se, 3)],
    ['total (Heston − BS)', fmt(lv.total.value), fmt(lv.total.se, 3)],
  ],
)}${
      lv.stepHalving
        ? `<h3>Step check of the split</h3>
<p class="muted">The three models re-run on the diagnostic's grid (largest step ${fmt(lv.stepHalving.maxStep * 365, 3)} days) and on the grid with every step cut in two, on the same random numbers (${fmt(lv.stepHalving.paths, 10)} paths; each coarse normal is the scaled sum of its two fine ones). A change beyond 2 SE and beyond a quarter of τ (${fmt(lv.stepHalving.flagAbove, 4)} ${esc(ccy)}) is flagged: log-Euler's step is then too coarse for that part.</p>
${table(
  ['Part', `Change on the halved grid (${esc(ccy)})`, 'SE', 'Flag'],
  (['smile', 'dynamics'] as const).map((k) => [
    k === 'smile' ? 'smile (LV − BS)' : 'dynamics (Heston − LV)',
    fmt(lv.stepHalving![k].value),
    fmt(lv.stepHalving![k].se, 3),
    lv.stepHalving!.flagged.includes(k) ? '<strong>step too coarse</strong>' : 'within noise or immaterial',
  ]),
)}`
        : '<p class="muted">This study was written before the split had a step-halving check.</p>'
    }`);
  }

  // 9. Hedge ratios
  if (s.results.greeks) {
    sec.push(`<h2>Hedge ratios</h2>
<p class="muted">Central bumps on the same paths: delta by rescaling the equity paths by 1 ± ${fmt(
      set.greeks?.spotBump ?? 0,
    )} (sticky moneyness: the whole smile moves with spot — under Black–Scholes the term-structure vol is unchanged, under Heston the parameters and today's variance are unchanged, under local vol the surface, set in ln(K/F), moves with the forward; short rates and FX are not moved; the deal's struck levels stay at today's fixing), rho by a parallel shift of ± ${fmt(
      (set.greeks?.rateBump ?? 0) * 1e4,
    )} bp of the domestic curve, vega by ± ${fmt((set.greeks?.volBump ?? 0) * 100)} vol point(s) on the whole grid with each variant recalibrated from its fitted parameters. Delta per 1% spot, vega per vol point, rho per basis point, all in the deal currency; thresholds in basis points of notional.</p>
${table(
  ['Variant', 'Delta', 'SE', 'Vega', 'SE', 'Rho', 'SE'],
  s.results.greeks.map((g) => [
    esc(g.variant),
    fmt(g.delta.value),
    fmt(g.delta.se, 3),
    fmt(g.vega?.value ?? null),
    fmt(g.vega?.se ?? null, 3),
    fmt(g.rho.value),
    fmt(g.rho.se, 3),
  ]),
)}
${table(
  ['Hedge ratio', 'Factor', 'Δ', 'SE', 'Budget (step halving)', 'Threshold', 'Verdict'],
  s.results.greekVerdicts.map((g) => [
    esc(g.greek),
    esc(label(g.factor)),
    fmt(g.decision.delta),
    fmt(g.decision.se, 3),
    g.stepHalvingChange ? fmt(g.decision.budget) : 'none',
    fmt(g.threshold),
    badge(g.decision.verdict),
  ]),
)}`);
  }

  // 10. Sweeps
  if (s.results.sweeps.length) {
    const plots = s.results.sweeps
      .map((sw) =>
        lineChart({
          title: `${sw.pair}${sw.scheme === 'euler' ? ` (${sw.schemeNote ?? 'Euler'})` : ''}: richest variant's price across the plausible range [${sw.range[0]}, ${sw.range[1]}] (market value ${fmt(sw.base, 3)}${sw.basePoint ? `, Euler price there ${fmt(sw.basePoint.price.value)}` : ''}); band ${fmt(sw.band)} ${ccy}`,
          xLabel: 'correlation',
          yLabel: `price (${ccy})`,
          series: [
            {
              name: 'price ± 2 SE',
              colour: SERIES[2]!,
              points: sw.points.map((p) => ({
                x: p.rho,
                y: p.price.value,
                lo: p.price.value - 2 * p.price.se,
                hi: p.price.value + 2 * p.price.se,
              })),
            },
          ],
        }),
      )
      .join('');
    sec.push(
      `<h2>Unquoted correlations</h2>${table(
        [
          'Pair',
          'Scheme',
          'Range',
          'Base price (same scheme)',
          'Price band',
          'Moves more than τ',
          'Factors material somewhere (|Δ| − 1.96·SE > τ)',
        ],
        s.results.sweeps.map((sw) => [
          esc(sw.pair),
          sw.scheme === 'euler'
            ? esc(sw.schemeNote ?? 'Euler')
            : esc(s.input.settings.scheme === 'euler' ? 'Euler' : 'QE'),
          `${fmt(sw.range[0], 3)} … ${fmt(sw.range[1], 3)}`,
          sw.basePoint
            ? `${fmt(sw.basePoint.price.value)} ± ${fmt(sw.basePoint.price.se, 3)}`
            : 'the main run',
          fmt(sw.band),
          sw.priceMovesMaterially ? '<strong>yes</strong>' : 'no',
          esc(sw.materialSomewhere.map(label).join(', ') || '—'),
        ]),
      )}${
        s.results.sweeps.some((sw) => sw.scheme === 'euler')
          ? `<p class="muted">A variance–rate correlation cannot be carried by the QE scheme (it assumes ρ(v,r) = 0), so those sweeps and their base point (ρ at its market value) run under full-truncation Euler (Lord, Koekkoek &amp; van Dijk 2010) on the same paths. Compare their points with their own Euler base price, not with the QE prices above: Euler adds its own discretisation bias, which the study's step-halving check (run under QE) does not measure.</p>`
          : ''
      }${plots}`,
    );
  }

  // 11. Costs and stability
  const ladderOnly = s.ladder.filter((x) => x.role === 'ladder');
  const richest = ladderOnly.reduce((a, b) => (b.mask > a.mask ? b : a), ladderOnly[0]!);
  const cost = s.verdicts.map((v) => {
    const withF = ladderOnly.filter((x) => x.factors.includes(v.factor));
    const cal = withF.reduce((t, x) => t + x.calibration.seconds, 0);
    const cf = Array.from(new Set(withF.map((x) => x.calibration.characteristicFunction))).join(', ');
    const mc = withF.reduce((t, x) => t + (s.timings.perVariant[x.id] ?? 0), 0);
    const bit = s.candidates.indexOf(v.factor);
    const loo = bit >= 0 ? ladderOnly.find((x) => x.mask === (richest.mask ^ (1 << bit))) : undefined;
    const extra = loo ? (s.timings.perVariant[richest.id] ?? 0) - (s.timings.perVariant[loo.id] ?? 0) : null;
    const extraFit = loo ? richest.calibration.rmseVol - loo.calibration.rmseVol : null;
    return [
      esc(label(v.factor)),
      fmt(cal, 3),
      esc(cf || '—'),
      fmt(mc, 3),
      extra === null ? '—' : fmt(extra, 3),
      extraFit === null ? '—' : fmt(extraFit * 1e4, 3),
    ];
  });
  sec.push(
    `<h2>Cost of each factor</h2>${table(
      [
        'Factor',
        'Calibration time of its variants (s)',
        'Characteristic function',
        'Monte Carlo time of its variants (s)',
        'Extra MC time, richest vs without it (s)',
        'Fit RMSE change, richest vs without it (vol bp)',
      ],
      cost,
    )}<p class="muted">Monte Carlo times are the study's simulation time split by each variant's measured share of path generation.</p>`,
  );
  if (s.results.stability.length) {
    const params = Array.from(new Set(s.results.stability.flatMap((r) => Object.keys(r.params))));
    const names = params.flatMap((p) =>
      Object.keys(s.results.stability[0]!.params[p] ?? {}).map((k) => `${p}.${k}`),
    );
    sec.push(
      `<h3>Parameter and verdict stability across snapshots</h3><div class="wide">${table(
        ['Date', ...s.verdicts.map((v) => esc(v.factor)), ...names.map(esc)],
        [
          ...s.results.stability.map((r) => [
            esc(r.date),
            ...s.verdicts.map((v) => badge(r.verdicts[v.factor] ?? '—')),
            ...names.map((n) => {
              const [p, k] = n.split('.');
              return fmt(r.params[p!]?.[k!] ?? null, 4);
            }),
          ]),
          // Coefficient of variation across the snapshots: sample standard deviation over |mean| (common practice).
          [
            '<em>variation (sd / |mean|)</em>',
            ...s.verdicts.map((v) =>
              new Set(s.results.stability.map((r) => r.verdicts[v.factor])).size === 1
                ? 'holds'
                : '<strong>changes</strong>',
            ),
            ...names.map((n) => {
              const [p, k] = n.split('.');
              const xs = s.results.stability
                .map((r) => r.params[p!]?.[k!])
                .filter((x): x is number => typeof x === 'number');
              if (xs.length < 2) return '—';
              const m = xs.reduce((a, b) => a + b, 0) / xs.length;
              const sd = Math.sqrt(xs.reduce((a, b) => a + (b - m) ** 2, 0) / (xs.length - 1));
              return m !== 0 ? pct(sd / Math.abs(m), 1) : '—';
            }),
          ],
        ],
      )}</div>`,
    );
  }

  // 12. Convergence
  if (s.results.convergence.length) {
    const factors = Object.keys(s.results.convergence[0]!.deltas);
    const z = 2;
    sec.push(
      `<h2>Convergence</h2>${lineChart({
        title:
          'Δ per factor against paths at each look (band ± 2 SE; each look decides with its own z, shown above); shaded: |Δ| < τ',
        xLabel: 'paths',
        yLabel: `Δ (${ccy})`,
        logX: true,
        hBand: { lo: -s.results.tau, hi: s.results.tau, label: 'immaterial zone' },
        series: factors.map((f, i) => ({
          name: f,
          colour: SERIES[i % SERIES.length]!,
          points: s.results.convergence.map((c) => ({
            x: c.paths,
            y: c.deltas[f]!.value,
            lo: c.deltas[f]!.value - z * c.deltas[f]!.se,
            hi: c.deltas[f]!.value + z * c.deltas[f]!.se,
          })),
        })),
      })}`,
    );
  }

  // 13. Reproducibility
  sec.push(`<h2>Reproducibility</h2>${table(
    ['Item', 'Value'],
    [
      ['Tool', `${esc(s.tool.name)} ${esc(s.tool.version)}`],
      ['Seed', esc(set.seed)],
      [
        'Paths (final), first look, batch',
        `${fmt(set.paths, 10)}, ${fmt(set.firstPaths, 10)}, ${fmt(set.batchSize, 10)}`,
      ],
      ['Largest time step (years)', fmt(set.maxStep, 4)],
      [
        'Heston scheme',
        esc(set.scheme === 'qe' ? 'QE with martingale correction (Andersen 2008)' : 'full-truncation Euler'),
      ],
      [
        'Calibration',
        esc(
          set.calibration === 'fair'
            ? 'fair: every variant refitted to the same instruments'
            : 'naive: factors added without refitting',
        ),
      ],
      ['Workers used', String(s.timings.workers)],
      [
        'Wall time (s): total / calibration / simulation / payoff',
        `${fmt(s.timings.total, 3)} / ${fmt(s.timings.calibration, 3)} / ${fmt(s.timings.simulation, 3)} / ${fmt(s.timings.payoff, 3)}`,
      ],
      ['SHA-256 of the study file', `<code>${esc(s.hash)}</code>`],
    ],
  )}
<p class="muted">Re-run with <code>factor-triage verify STUDY_FILE</code>: results are bit-identical for any number of workers. The hash detects edits made after saving; it does not prove who produced the file.</p>`);

  // 14. Limitations
  sec.push(
    `<h2>Limitations</h2><ul class="tight">${[...s.limitations, ...s.warnings.map((w) => `warning: ${w}`)]
      .map((l) => `<li>${esc(l)}</li>`)
      .join('')}</ul><div class="caution">${esc(CAUTION)}</div>`,
  );

  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width,initial-scale=1">
<title>Factor study — ${esc(deal.name)}</title><style>${CSS}</style></head><body><main>
<header class="top"><h1>Factor study: ${esc(deal.name)}</h1><div class="meta">Market ${esc(mkt.date)} · ${fmt(
    set.paths,
    10,
  )} paths · seed ${esc(set.seed)} · τ = ${fmt(s.results.tau)} ${esc(ccy)} · ${esc(s.tool.name)} ${esc(s.tool.version)} · hash ${esc(
    s.hash.slice(0, 16),
  )}…</div></header>
${sec.join('\n')}
</main></body></html>`;
}
