/**
 * Numerical integration: fixed Gauss–Legendre rules, adaptive Gauss–Kronrod (7–15) and semi-infinite ranges.
 *
 * Sources:
 * - Gauss–Legendre nodes by Newton's method on P_n with the three-term recurrence
 *   (n+1)P_{n+1} = (2n+1)xP_n − nP_{n−1}, weights w_i = 2 / ((1 − x_i²) P_n'(x_i)²)
 *   (Abramowitz & Stegun 1964, eqs. 22.7.10 and 25.4.29; Press et al., Numerical Recipes, 3rd ed. 2007, §4.6).
 * - Gauss–Kronrod 7–15 pair and its error estimate: R. Piessens, E. de Doncker-Kapenga, C. Überhuber, D. Kahaner,
 *   QUADPACK (Springer 1983), routine QK15 (error estimate of §2.2.2) and the globally adaptive strategy of QAG.
 * - Semi-infinite range [a, ∞): x = a + t/(1 − t), dx = dt/(1 − t)², t in [0, 1) (QUADPACK QAGI uses the same
 *   kind of map); whole line by splitting at 0.
 */
import { EngineError, issue } from '../errors.ts';
import { cos, pow } from './detMath.ts';

/** Nodes and weights of an n-point Gauss–Legendre rule on [−1, 1], nodes increasing. */
export interface GaussRule {
  readonly nodes: Float64Array;
  readonly weights: Float64Array;
}

// Memo of computed rules. The stored arrays never leave this module: callers receive copies, so no caller can
// change what another caller sees.
const ruleMemo = new Map<number, GaussRule>();

/** [P_n(x), P_{n−1}(x)] by the three-term recurrence (n+1)P_{n+1} = (2n+1)xP_n − nP_{n−1}, P_0 = 1, P_1 = x (n ≥ 1). */
function legendrePair(n: number, x: number): [number, number] {
  let p0 = 1;
  let p1 = x;
  for (let k = 2; k <= n; k++) {
    const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
    p0 = p1;
    p1 = p2;
  }
  return [p1, p0];
}

function computeGaussLegendre(n: number): GaussRule {
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  const m = Math.floor((n + 1) / 2);
  for (let i = 0; i < m; i++) {
    // Initial guess (A&S 22.16.6 asymptotics): cos(π(i + 3/4)/(n + 1/2)).
    let x = cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 0;
    for (let iter = 0; iter < 100; iter++) {
      const [p1, p0] = legendrePair(n, x);
      // P_n'(x) = n (x P_n − P_{n−1}) / (x² − 1)
      dp = (n * (x * p1 - p0)) / (x * x - 1);
      const dx = p1 / dp;
      x -= dx;
      if (Math.abs(dx) <= 1e-16 * Math.max(1, Math.abs(x))) break;
    }
    // Re-evaluate the derivative at the converged node.
    const [p1, p0] = legendrePair(n, x);
    dp = n === 1 ? 1 : (n * (x * p1 - p0)) / (x * x - 1);
    const w = 2 / ((1 - x * x) * dp * dp);
    nodes[i] = -x;
    nodes[n - 1 - i] = x;
    weights[i] = w;
    weights[n - 1 - i] = w;
  }
  if (n % 2 === 1) nodes[(n - 1) / 2] = 0;
  return { nodes, weights };
}

function cachedRule(n: number): GaussRule {
  if (!(Number.isInteger(n) && n >= 1 && n <= 4096))
    throw new EngineError(
      'E_QUADRATURE_ORDER',
      `gaussLegendre: n must be an integer in [1, 4096] (got ${n})`,
      [
        issue(
          'E_QUADRATURE_ORDER',
          'n',
          'must be an integer in [1, 4096]',
          n,
          'choose a rule size such as 32 or 64',
        ),
      ],
    );
  let r = ruleMemo.get(n);
  if (!r) {
    r = computeGaussLegendre(n);
    ruleMemo.set(n, r);
  }
  return r;
}

/** The n-point Gauss–Legendre rule on [−1, 1] (exact for polynomials of degree ≤ 2n − 1). Returns fresh arrays. */
export function gaussLegendre(n: number): GaussRule {
  const r = cachedRule(n);
  return { nodes: r.nodes.slice(), weights: r.weights.slice() };
}

/** ∫_a^b f(x) dx by the n-point Gauss–Legendre rule mapped to [a, b]. */
export function integrateGL(f: (x: number) => number, a: number, b: number, n: number): number {
  const { nodes, weights } = cachedRule(n);
  const h = 0.5 * (b - a);
  const c = 0.5 * (b + a);
  let s = 0;
  for (let i = 0; i < n; i++) s += weights[i]! * f(c + h * nodes[i]!);
  return s * h;
}

// Gauss–Kronrod 15-point abscissae (positive half, descending to 0) and weights; Gauss 7-point weights for the
// abscissae XGK[1], XGK[3], XGK[5], XGK[7] (QUADPACK QK15, Piessens et al. 1983).
const XGK = [
  0.991455371120812639206854697526329, 0.949107912342758524526189684047851,
  0.864864423359769072789712788640926, 0.741531185599394439863864773280788,
  0.586087235467691130294144845693013, 0.405845151377397166906606412076961,
  0.207784955007898467600689403773245, 0.0,
];
const WGK = [
  0.02293532201052922496373200805897, 0.063092092629978553290700663189204,
  0.104790010322250183839876322541518, 0.140653259715525918745189590510238,
  0.16900472663926790282658342659855, 0.190350578064785409913256402421014,
  0.204432940075298892414161999234649, 0.209482141084727828012999174891714,
];
const WG = [
  0.129484966168869693270611432679082, 0.27970539148927666790146777142378,
  0.381830050505118944950369775488975, 0.417959183673469387755102040816327,
];

interface Segment {
  a: number;
  b: number;
  value: number;
  error: number;
  /** Rounding floor 50·eps·∫|f| of the estimate (QUADPACK QK15). */
  roundoff: number;
  depth: number;
}

const EPMACH = 2.220446049250313e-16;
const UFLOW = 2.2250738585072014e-308;

function gk15(f: (x: number) => number, a: number, b: number, depth: number): Segment {
  const c = 0.5 * (a + b);
  const h = 0.5 * (b - a);
  const fc = f(c);
  let k = fc * WGK[7]!;
  let g = fc * WG[3]!;
  let kAbs = Math.abs(k);
  const fl: number[] = [];
  const fr: number[] = [];
  for (let j = 0; j < 7; j++) {
    const dx = h * XGK[j]!;
    const f1 = f(c - dx);
    const f2 = f(c + dx);
    fl.push(f1);
    fr.push(f2);
    k += WGK[j]! * (f1 + f2);
    kAbs += WGK[j]! * (Math.abs(f1) + Math.abs(f2));
    if (j % 2 === 1) g += WG[(j - 1) / 2]! * (f1 + f2);
  }
  // QUADPACK QK15 error estimate: |K15 − G7| scaled by the integrand's variation resasc = ∫|f − mean|,
  // err = resasc · min(1, (200 |K15 − G7| / resasc)^{3/2}), floored at 50·eps·∫|f| (Piessens et al. 1983, §2.2.2).
  const mean = 0.5 * k;
  let asc = WGK[7]! * Math.abs(fc - mean);
  for (let j = 0; j < 7; j++) asc += WGK[j]! * (Math.abs(fl[j]! - mean) + Math.abs(fr[j]! - mean));
  const ah = Math.abs(h);
  const resabs = kAbs * ah;
  const resasc = asc * ah;
  let err = Math.abs((k - g) * h);
  if (resasc !== 0 && err !== 0) err = resasc * Math.min(1, pow((200 * err) / resasc, 1.5));
  if (resabs > UFLOW / (50 * EPMACH)) err = Math.max(50 * EPMACH * resabs, err);
  return { a, b, value: k * h, error: err, roundoff: 50 * EPMACH * resabs, depth };
}

/** Options of {@link integrateAdaptive}. */
export interface AdaptiveOptions {
  /** Absolute tolerance on the integral (default 1e-12). */
  absTol?: number;
  /** Relative tolerance on the integral (default 1e-10). */
  relTol?: number;
  /** Largest number of bisections of one sub-interval (default 30). */
  maxDepth?: number;
  /** Largest number of sub-intervals (default 2000). */
  maxSegments?: number;
}

/** Result of an adaptive integration with its error estimate. */
export interface AdaptiveResult {
  value: number;
  /** Estimated absolute error (sum of the QK15 estimates over the sub-intervals). */
  error: number;
  /** Number of integrand evaluations. */
  evaluations: number;
  converged: boolean;
}

/**
 * Globally adaptive Gauss–Kronrod 7–15 (QUADPACK QAG strategy): bisect the sub-interval with the largest error
 * until the total error is ≤ max(absTol, relTol·|I|, rounding floor 50·eps·∫|f|). Returns the estimate and whether
 * it converged.
 */
export function integrateAdaptiveReport(
  f: (x: number) => number,
  a: number,
  b: number,
  options: AdaptiveOptions = {},
): AdaptiveResult {
  const absTol = options.absTol ?? 1e-12;
  const relTol = options.relTol ?? 1e-10;
  const maxDepth = options.maxDepth ?? 30;
  const maxSegments = options.maxSegments ?? 2000;
  if (a === b) return { value: 0, error: 0, evaluations: 0, converged: true };
  const segs: Segment[] = [gk15(f, a, b, 0)];
  let evaluations = 15;
  for (;;) {
    let value = 0;
    let error = 0;
    let roundoff = 0;
    let worst = -1;
    let depthLimited = false;
    for (let i = 0; i < segs.length; i++) {
      const s = segs[i]!;
      value += s.value;
      error += s.error;
      roundoff += s.roundoff;
      // A segment whose error is its rounding floor cannot improve by bisection: never pick it.
      if (s.error <= 1.0001 * s.roundoff) continue;
      if (s.depth >= maxDepth) depthLimited = true;
      else if (worst < 0 || s.error > segs[worst]!.error) worst = i;
    }
    if (!Number.isFinite(value)) return { value, error: Infinity, evaluations, converged: false };
    // A tolerance below the rounding floor cannot be met by bisecting: accept the floor (QUADPACK reports the same
    // situation as roundoff, ier = 2).
    if (error <= Math.max(absTol, relTol * Math.abs(value), 1.0001 * roundoff))
      return { value, error, evaluations, converged: true };
    if (worst < 0) return { value, error, evaluations, converged: !depthLimited };
    if (segs.length >= maxSegments) return { value, error, evaluations, converged: false };
    const s = segs[worst]!;
    const mid = 0.5 * (s.a + s.b);
    segs[worst] = gk15(f, s.a, mid, s.depth + 1);
    segs.push(gk15(f, mid, s.b, s.depth + 1));
    evaluations += 30;
  }
}

function requireConverged(r: AdaptiveResult, where: string, options: AdaptiveOptions): number {
  if (!r.converged) {
    const tol = { absTol: options.absTol ?? 1e-12, relTol: options.relTol ?? 1e-10 };
    throw new EngineError(
      'E_QUADRATURE_NOT_CONVERGED',
      `${where}: integral did not reach the tolerance (estimate ${r.value}, error ${r.error}, ${r.evaluations} evaluations); ` +
        'loosen absTol/relTol, raise maxDepth/maxSegments, or split the range at singular points',
      [
        issue(
          'E_QUADRATURE_NOT_CONVERGED',
          where,
          `must converge to absTol ${tol.absTol} / relTol ${tol.relTol}`,
          { value: r.value, error: r.error },
          'loosen the tolerance or split the range at singular points',
        ),
      ],
    );
  }
  return r.value;
}

/** ∫_a^b f(x) dx by adaptive Gauss–Kronrod 7–15; throws EngineError `E_QUADRATURE_NOT_CONVERGED` if the tolerance is not met. */
export function integrateAdaptive(
  f: (x: number) => number,
  a: number,
  b: number,
  options: AdaptiveOptions = {},
): number {
  return requireConverged(integrateAdaptiveReport(f, a, b, options), 'integrateAdaptive', options);
}

/**
 * ∫_a^∞ f(x) dx by the map x = a + t/(1 − t) onto [0, 1) and adaptive Gauss–Kronrod. The integrand must decay
 * fast enough for the integral to exist; for oscillating tails (Fourier inversions) prefer a finite cut-off.
 */
export function integrateToInfinity(
  f: (x: number) => number,
  a: number,
  options: AdaptiveOptions = {},
): number {
  const g = (t: number): number => {
    const u = 1 - t;
    const v = f(a + t / u);
    return v === 0 ? 0 : v / (u * u);
  };
  return requireConverged(integrateAdaptiveReport(g, 0, 1, options), 'integrateToInfinity', options);
}

/** ∫_{−∞}^{∞} f(x) dx as ∫_0^∞ (f(x) + f(−x)) dx. */
export function integrateWholeLine(f: (x: number) => number, options: AdaptiveOptions = {}): number {
  return integrateToInfinity((x) => f(x) + f(-x), 0, options);
}
