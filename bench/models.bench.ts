/**
 * Analytic model timings beside baselines measured in the same run: one Black–Scholes price and 1000 Math.exp.
 * Targets: single Heston European to 1e-7 absolute < 100 µs; 50-strike COS slice < 5 µs per option;
 * Black–Scholes implied vol < 2 µs. The accuracy of each Heston timing is checked against the Lewis integral first.
 * The slice pricer chooses its method (COS, or the Lewis integral on panels for heavy-tailed long expiries); each line
 * names the method used, and the forced-COS timing of the heavy case is printed beside it for comparison.
 */
import { fmtTime, report, timePerCall } from './timing.ts';
import {
  bsImpliedVol,
  bsPrice,
  hestonCos,
  hestonCosSlice,
  hestonCosSliceWithGradient,
  hestonLewis,
  type BsImpliedVolInput,
  type HestonMarket,
} from '../src/engine/models/index.ts';

export async function run(): Promise<void> {
  const bs = timePerCall(() => bsPrice({ type: 'call', S: 100, K: 105, T: 1, r: 0.02, q: 0.01, vol: 0.25 }));
  let acc = 0;
  const exp1000 = timePerCall(() => {
    for (let i = 0; i < 1000; i++) acc += Math.exp(i * 1e-3);
    return acc;
  });
  console.log(`baseline: one Black–Scholes price ${fmtTime(bs)}, 1000 Math.exp ${fmtTime(exp1000)}`);

  const markets: { name: string; m: HestonMarket }[] = [
    {
      name: 'Lewis case T=1',
      m: { S: 100, T: 1, r: 0.01, q: 0.02, params: { v0: 0.04, kappa: 4, theta: 0.25, sigma: 1, rho: -0.5 } },
    },
    {
      name: 'F&O case T=1',
      m: {
        S: 100,
        T: 1,
        r: 0,
        q: 0,
        params: { v0: 0.0175, kappa: 1.5768, theta: 0.0398, sigma: 0.5751, rho: -0.5711 },
      },
    },
    {
      name: 'T=0.1',
      m: {
        S: 100,
        T: 0.1,
        r: 0.02,
        q: 0,
        params: { v0: 0.04, kappa: 1.5, theta: 0.04, sigma: 0.8, rho: -0.7 },
      },
    },
    {
      name: 'Andersen Case I T=10',
      m: { S: 100, T: 10, r: 0, q: 0, params: { v0: 0.04, kappa: 0.5, theta: 0.04, sigma: 1, rho: -0.9 } },
    },
  ];
  const tol = 1e-7;
  for (const { name, m } of markets) {
    const ref = hestonLewis({ ...m, type: 'call', K: 105 });
    const v = hestonCos({ ...m, type: 'call', K: 105, options: { tol } });
    const t = timePerCall(() => hestonCos({ ...m, type: 'call', K: 105, options: { tol } }));
    const how = hestonCosSlice({ ...m, strikes: [105], options: { tol } }).method;
    console.log(
      report(`Heston European single, tol 1e-7 (${name}, ${how})`, t, bs, { seconds: 100e-6 }) +
        `  |err| ${Math.abs(v - ref).toExponential(1)}`,
    );
    if (how !== 'cos') {
      const tc = timePerCall(() =>
        hestonCos({ ...m, type: 'call', K: 105, options: { tol, method: 'cos' } }),
      );
      console.log(report(`  (same, COS forced)`, tc, bs));
    }
  }
  const strikes = Array.from({ length: 50 }, (_, i) => 60 + i * 1.6);
  for (const { name, m } of markets) {
    const s = hestonCosSlice({ ...m, strikes, types: 'call', options: { tol } });
    let worst = 0;
    for (const i of [0, 12, 25, 37, 49])
      worst = Math.max(worst, Math.abs(s.prices[i]! - hestonLewis({ ...m, type: 'call', K: strikes[i]! })));
    const t = timePerCall(() => hestonCosSlice({ ...m, strikes, types: 'call', options: { tol } }).prices[0]);
    console.log(
      report(`Heston 50-strike slice, per option (${name}, ${s.method})`, t / 50, bs, { seconds: 5e-6 }) +
        `  N=${s.N} |err| ${worst.toExponential(1)}`,
    );
  }
  {
    const m = markets[0]!.m;
    const t = timePerCall(
      () =>
        hestonCosSliceWithGradient({ ...m, strikes: strikes.slice(0, 40), types: 'call', options: { tol } })
          .prices[0],
    );
    console.log(report('Heston COS 40 strikes + gradient (v0,κ,θ,σ,ρ), whole slice', t, bs));
  }

  // Accuracy of COS against the Lewis integral, in price and in implied-vol basis points (out-of-the-money side).
  console.log('COS accuracy vs Lewis (default tol 1e-10·S): case, K/S, |price err|, |implied vol err| in bp');
  for (const { name, m } of markets) {
    const ks = [0.5, 0.8, 1, 1.25, 2].map((x) => x * m.S);
    const s = hestonCosSlice({ ...m, strikes: ks, types: 'put' });
    const cells = ks.map((K, i) => {
      const ref = hestonLewis({ ...m, type: 'put', K });
      const F = m.S * Math.exp((m.r - m.q) * m.T);
      const toOtm = (put: number) =>
        K < F ? put : put + m.S * Math.exp(-m.q * m.T) - K * Math.exp(-m.r * m.T);
      const type = K < F ? 'put' : 'call';
      let bp = NaN;
      try {
        const a = bsImpliedVol({ type, price: toOtm(ref), S: m.S, K, T: m.T, r: m.r, q: m.q });
        const b = bsImpliedVol({ type, price: toOtm(s.prices[i]!), S: m.S, K, T: m.T, r: m.r, q: m.q });
        bp = Math.abs(a - b) * 1e4;
      } catch {
        bp = NaN; // price at a bound: no implied vol
      }
      return `${(K / m.S).toFixed(2)}: ${Math.abs(s.prices[i]! - ref).toExponential(1)} / ${bp.toExponential(1)} bp`;
    });
    console.log(`  ${name.padEnd(22)} ${cells.join('   ')}`);
  }

  // Implied vol: a mix of moneyness and maturities, including wings.
  const quotes: BsImpliedVolInput[] = [];
  for (const K of [40, 70, 90, 100, 110, 140, 250])
    for (const T of [0.05, 0.5, 2, 10]) {
      const type = K < 100 ? 'put' : 'call';
      const p = { type, S: 100, K, T, r: 0.02, q: 0.01 } as const;
      quotes.push({ ...p, price: bsPrice({ ...p, vol: 0.3 }) });
    }
  let k = 0;
  const iv = timePerCall(() => bsImpliedVol(quotes[k++ % quotes.length]!));
  console.log(report('Black–Scholes implied vol (28 quotes, mixed wings)', iv, bs, { seconds: 2e-6 }));
}
