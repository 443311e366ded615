/**
 * Deterministic elementary functions (src/engine/math/detMath.ts): nanoseconds per call of each beside the runtime's
 * Math.* version, measured in the same run over the same 4096 arguments. Target (common practice for the Monte
 * Carlo inner loops): exp and log within 2× of the runtime's.
 */
import * as D from '../src/engine/math/detMath.ts';
import { fmtTime, timePerCall } from './timing.ts';

const M = 4096;

function args(gen: (i: number) => number): Float64Array {
  const a = new Float64Array(M);
  for (let i = 0; i < M; i++) a[i] = gen(i);
  return a;
}

function sweep1(f: (x: number) => number, a: Float64Array): () => number {
  return () => {
    let s = 0;
    for (let i = 0; i < M; i++) s += f(a[i]!);
    return s;
  };
}

function sweep2(f: (x: number, y: number) => number, a: Float64Array, b: Float64Array): () => number {
  return () => {
    let s = 0;
    for (let i = 0; i < M; i++) s += f(a[i]!, b[i]!);
    return s;
  };
}

export async function run(): Promise<void> {
  const u = (i: number): number => ((i * 2654435761) % 4294967296) / 4294967296;
  const small = args((i) => (u(i) - 0.5) * 20);
  const pos = args((i) => 10 ** (u(i) * 20 - 10));
  const tiny = args((i) => (u(i) - 0.5) * 1e-3);
  const ang = args((i) => (u(i) - 0.5) * 200);
  const expo = args((i) => (u(i + 7) - 0.5) * 8);
  const rows: [string, () => number, () => number, number?][] = [
    ['exp (|x| < 10)', sweep1(D.exp, small), sweep1(Math.exp, small), 2],
    ['log (1e-10 .. 1e10)', sweep1(D.log, pos), sweep1(Math.log, pos), 2],
    ['pow (x > 0, |y| < 4)', sweep2(D.pow, pos, expo), sweep2(Math.pow, pos, expo)],
    ['expm1 (|x| < 5e-4)', sweep1(D.expm1, tiny), sweep1(Math.expm1, tiny)],
    ['log1p (|x| < 5e-4)', sweep1(D.log1p, tiny), sweep1(Math.log1p, tiny)],
    ['sin (|x| < 100)', sweep1(D.sin, ang), sweep1(Math.sin, ang)],
    ['cos (|x| < 100)', sweep1(D.cos, ang), sweep1(Math.cos, ang)],
    ['atan (|x| < 10)', sweep1(D.atan, small), sweep1(Math.atan, small)],
    ['atan2', sweep2(D.atan2, small, expo), sweep2(Math.atan2, small, expo)],
    ['hypot', sweep2(D.hypot, small, expo), sweep2(Math.hypot, small, expo)],
  ];
  console.log(`${'function'.padEnd(24)} ${'detMath'.padStart(10)} ${'Math.*'.padStart(10)}   ratio  target`);
  for (const [name, det, rt, target] of rows) {
    const td = timePerCall(det, 150, 5) / M;
    const tr = timePerCall(rt, 150, 5) / M;
    const ratio = td / tr;
    const t = target ? `  <= ${target}x: ${ratio <= target ? 'met' : 'NOT met'}` : '';
    console.log(
      `${name.padEnd(24)} ${fmtTime(td).padStart(10)} ${fmtTime(tr).padStart(10)}  ${ratio.toFixed(2).padStart(6)}x${t}`,
    );
  }
  const huge = args((i) => (u(i) + 0.5) * 1e200);
  const th = timePerCall(sweep1(D.sin, huge), 150, 3) / M;
  const thr = timePerCall(sweep1(Math.sin, huge), 150, 3) / M;
  console.log(
    `${'sin (|x| ~ 1e200)'.padEnd(24)} ${fmtTime(th).padStart(10)} ${fmtTime(thr).padStart(10)}  ${(th / thr).toFixed(2).padStart(6)}x  (exact BigInt reduction; off the hot path)`,
  );
}
