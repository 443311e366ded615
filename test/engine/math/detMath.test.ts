import { describe, it, expect } from 'vitest';
import {
  atan,
  atan2,
  cos,
  exp,
  expm1,
  hypot,
  hypotOf,
  log,
  log1p,
  NPIO2_HW,
  PI_OVER_4_HEX,
  pow,
  sin,
  TWO_OVER_PI_24,
} from '../../../src/engine/math/detMath.ts';

// Oracle for the grids: the runtime's Math.* functions. fdlibm 5.3 documents an error below 1 ulp for every routine
// ported here (comments in e_exp.c, e_log.c, e_pow.c, s_expm1.c, s_log1p.c, k_sin.c, k_cos.c, s_atan.c; e_atan2.c),
// and a runtime is itself within about 1 ulp of the true value, so two faithful results differ by at most 1 ulp.

const F = new Float64Array(1);
const B = new BigInt64Array(F.buffer);
const U = new BigUint64Array(F.buffer);

/** Position of x on the ordered line of doubles (−0 and +0 both at 0). */
function ordinal(x: number): bigint {
  F[0] = x;
  const b = B[0]!;
  return b < 0n ? -(b & 0x7fffffffffffffffn) : b;
}

/** Distance in ulps between two doubles; 0 when both are NaN. */
function ulpDistance(a: number, b: number): number {
  if (a !== a && b !== b) return 0;
  if (a !== a || b !== b) return Infinity;
  const d = ordinal(a) - ordinal(b);
  return Number(d < 0n ? -d : d);
}

function hex(x: number): string {
  F[0] = x;
  return '0x' + U[0]!.toString(16).padStart(16, '0');
}

/** Seeded uniform generator on [0, 1) (a 32-bit xorshift; common practice), one state per call site. */
function uniforms(seed: number): () => number {
  let s = seed >>> 0 || 1;
  return () => {
    s ^= s << 13;
    s >>>= 0;
    s ^= s >>> 17;
    s ^= s << 5;
    s >>>= 0;
    return s / 4294967296;
  };
}

/** Largest ulp distance of f from g over n points from gen; throws with the inputs at the first point over tol. */
function worstUlp1(
  name: string,
  f: (x: number) => number,
  g: (x: number) => number,
  gen: () => number,
  n: number,
  tol = 1,
): number {
  let worst = 0;
  for (let i = 0; i < n; i++) {
    const x = gen();
    const a = f(x);
    const b = g(x);
    const d = ulpDistance(a, b);
    if (!(d <= tol))
      throw new Error(
        `${name}(${x}): expected ${b} (${hex(b)}), computed ${a} (${hex(a)}), ${d} ulp > tol ${tol}`,
      );
    if (d > worst) worst = d;
  }
  return worst;
}

function worstUlp2(
  name: string,
  f: (x: number, y: number) => number,
  g: (x: number, y: number) => number,
  gen: () => [number, number],
  n: number,
  tol = 1,
): number {
  let worst = 0;
  for (let i = 0; i < n; i++) {
    const [x, y] = gen();
    const a = f(x, y);
    const b = g(x, y);
    const d = ulpDistance(a, b);
    if (!(d <= tol))
      throw new Error(
        `${name}(${x}, ${y}): expected ${b} (${hex(b)}), computed ${a} (${hex(a)}), ${d} ulp > ${tol}`,
      );
    if (d > worst) worst = d;
  }
  return worst;
}

const N = 60_000;

describe('detMath agrees with the runtime within 1 ulp on seeded grids (fdlibm bound < 1 ulp)', () => {
  it('exp over the whole finite range and near 0', () => {
    const u = uniforms(11);
    worstUlp1('exp', exp, Math.exp, () => (u() - 0.5) * 1490, N);
    worstUlp1('exp', exp, Math.exp, () => (u() - 0.5) * 2 * 10 ** (-12 * u()), N);
  });

  it('log over normal and subnormal magnitudes and near 1', () => {
    const u = uniforms(12);
    worstUlp1('log', log, Math.log, () => 2 ** ((u() - 0.5) * 2140) * (1 + u()), N);
    worstUlp1('log', log, Math.log, () => 1 + (u() - 0.5) * 10 ** (-10 * u()), N);
  });

  it('log1p and expm1 across magnitudes from 1e-18 to their range ends', () => {
    const u = uniforms(13);
    worstUlp1('log1p', log1p, Math.log1p, () => 10 ** (18 * u() - 18) * (u() < 0.5 ? -1 : 1) * 0.999, N);
    worstUlp1('log1p', log1p, Math.log1p, () => -1 + 2 ** (600 * u() - 300), N);
    worstUlp1('expm1', expm1, Math.expm1, () => 10 ** (20 * u() - 18) * (u() < 0.5 ? -1 : 1), N);
    worstUlp1('expm1', expm1, Math.expm1, () => (u() - 0.5) * 1420, N);
  });

  it('sin and cos on |x| < 100, on the Cody–Waite range and on huge arguments', () => {
    const u = uniforms(14);
    for (const [f, g, nm] of [
      [sin, Math.sin, 'sin'],
      [cos, Math.cos, 'cos'],
    ] as const) {
      worstUlp1(nm, f, g, () => (u() - 0.5) * 200, N);
      worstUlp1(nm, f, g, () => (u() - 0.5) * 1.6e6, N / 4);
      worstUlp1(nm, f, g, () => (u() - 0.5) * 2 * 10 ** (6 + 302 * u()), N / 10);
      worstUlp1(nm, f, g, () => (u() - 0.5) * 1e-6, N / 10);
    }
  });

  it('sin and cos near multiples of π/2, where the reduction cancels most', () => {
    const u = uniforms(15);
    const nearMultiple = (): number => {
      const k = Math.floor(u() * 2e5) - 1e5;
      return k * 1.5707963267948966 * (1 + (u() - 0.5) * 1e-15);
    };
    worstUlp1('sin', sin, Math.sin, nearMultiple, N / 4);
    worstUlp1('cos', cos, Math.cos, nearMultiple, N / 4);
  });

  it('atan and atan2 over all quadrants and magnitudes', () => {
    const u = uniforms(16);
    worstUlp1('atan', atan, Math.atan, () => (u() - 0.5) * 2 * 10 ** (40 * u() - 20), N);
    const g = (): [number, number] => [
      (u() - 0.5) * 10 ** (20 * u() - 10),
      (u() - 0.5) * 10 ** (20 * u() - 10),
    ];
    worstUlp2('atan2', atan2, Math.atan2, g, N);
  });

  it('pow on positive bases, negative bases with integer exponents, and near 1', () => {
    const u = uniforms(17);
    worstUlp2('pow', pow, Math.pow, () => [10 ** (20 * u() - 10), (u() - 0.5) * 60], N);
    worstUlp2('pow', pow, Math.pow, () => [-(10 ** (4 * u() - 2)), Math.round((u() - 0.5) * 200)], N / 2);
    worstUlp2('pow', pow, Math.pow, () => [1 + (u() - 0.5) * 1e-7, (u() - 0.5) * 1e9], N / 2);
    worstUlp2('pow', pow, Math.pow, () => [u() * 3, (u() - 0.5) * 2e3], N / 2);
  });

  it('hypot over 600 decades: within 1 ulp of the exactly rounded value, and within 2 ulp of the runtime', () => {
    // Oracle: exact integer arithmetic (x = m·2^e with BigInt, integer square root with 64 guard bits, then one
    // rounding), so the check does not rest on the runtime's hypot, which is itself not faithful (2 ulp seen here).
    const u = uniforms(18);
    const parts = (v: number): [bigint, number] => {
      let m = Math.abs(v);
      let e = 0;
      while (!Number.isInteger(m)) {
        m *= 2;
        e--;
      }
      return [BigInt(m), e];
    };
    const isqrt = (n: bigint): bigint => {
      // Newton's iteration from above (start 2^⌈bits/2⌉ ≥ √n) decreases monotonically to ⌊√n⌋.
      let x = 1n << BigInt(Math.ceil(n.toString(2).length / 2));
      for (;;) {
        const y = (x + n / x) >> 1n;
        if (y >= x) break;
        x = y;
      }
      while (x * x > n) x--;
      while ((x + 1n) * (x + 1n) <= n) x++;
      return x;
    };
    const exactHypot = (x: number, y: number): number => {
      const [mx, ex] = parts(x);
      const [my, ey] = parts(y);
      const e = Math.min(ex, ey);
      const X = mx << BigInt(ex - e);
      const Y = my << BigInt(ey - e);
      const r = isqrt((X * X + Y * Y) << 128n); // √(x² + y²)·2^(64 − e)
      // r·2^(e − 64): scale in two steps that stay exact
      return Number(r) * 2 ** Math.max(e - 64, -1000) * 2 ** (e - 64 - Math.max(e - 64, -1000));
    };
    const gen = (): [number, number] => [
      (u() - 0.5) * 10 ** (40 * u() - 20),
      (u() - 0.5) * 10 ** (40 * u() - 20),
    ];
    worstUlp2('hypot', hypot, exactHypot, gen, N / 10);
    const wide = (): [number, number] => [
      (u() - 0.5) * 10 ** (600 * u() - 300),
      (u() - 0.5) * 10 ** (600 * u() - 300),
    ];
    worstUlp2('hypot', hypot, Math.hypot, wide, N, 2);
  });
});

describe('hypotOf: norm of many values', () => {
  it('is exact on scaled Pythagorean quadruples (1² + 2² + 2² = 3², 2² + 3² + 6² = 7²) and handles ∞, NaN, empty', () => {
    for (const k of [-1060, -300, 0, 300, 1010]) {
      const s = 2 ** k;
      expect(hypotOf([s, 2 * s, 2 * s])).toBe(3 * s);
      expect(hypotOf([2 * s, -3 * s, 6 * s])).toBe(7 * s);
    }
    expect(hypotOf([])).toBe(0);
    expect(hypotOf([NaN, Infinity])).toBe(Infinity);
    expect(hypotOf([1, NaN])).toBeNaN();
    expect(hypotOf([-5])).toBe(5);
  });

  it('agrees with the two-argument hypot within 1 ulp (both within 1 ulp of the exact norm)', () => {
    const u = uniforms(19);
    worstUlp2(
      'hypotOf',
      (x, y) => hypotOf([x, y]),
      hypot,
      () => [(u() - 0.5) * 10 ** (600 * u() - 300), (u() - 0.5) * 10 ** (600 * u() - 300)],
      N / 4,
    );
  });
});

describe('detMath special values are those of fdlibm and ECMAScript', () => {
  const cases: [string, number, number][] = [
    ['exp(NaN)', exp(NaN), NaN],
    ['exp(+∞)', exp(Infinity), Infinity],
    ['exp(−∞)', exp(-Infinity), 0],
    ['exp(710)', exp(710), Infinity],
    ['exp(−746)', exp(-746), 0],
    ['exp(−0)', exp(-0), 1],
    ['log(0)', log(0), -Infinity],
    ['log(−0)', log(-0), -Infinity],
    ['log(−1)', log(-1), NaN],
    ['log(+∞)', log(Infinity), Infinity],
    ['log(NaN)', log(NaN), NaN],
    ['log1p(−1)', log1p(-1), -Infinity],
    ['log1p(−2)', log1p(-2), NaN],
    ['log1p(+∞)', log1p(Infinity), Infinity],
    ['expm1(−∞)', expm1(-Infinity), -1],
    ['expm1(+∞)', expm1(Infinity), Infinity],
    ['expm1(−800)', expm1(-800), -1],
    ['sin(+∞)', sin(Infinity), NaN],
    ['cos(−∞)', cos(-Infinity), NaN],
    ['sin(NaN)', sin(NaN), NaN],
    ['cos(0)', cos(0), 1],
    ['atan(+∞)', atan(Infinity), Math.PI / 2],
    ['atan(−∞)', atan(-Infinity), -Math.PI / 2],
    ['atan2(+0, −0)', atan2(0, -0), Math.PI],
    ['atan2(−0, −1)', atan2(-0, -1), -Math.PI],
    ['atan2(1, 0)', atan2(1, 0), Math.PI / 2],
    ['atan2(+∞, +∞)', atan2(Infinity, Infinity), Math.PI / 4],
    ['atan2(−∞, −∞)', atan2(-Infinity, -Infinity), (-3 * Math.PI) / 4],
    ['atan2(1, −∞)', atan2(1, -Infinity), Math.PI],
    ['atan2(NaN, 1)', atan2(NaN, 1), NaN],
    ['pow(NaN, 0)', pow(NaN, 0), 1],
    ['pow(1, NaN)', pow(1, NaN), NaN],
    ['pow(1, ∞)', pow(1, Infinity), NaN],
    ['pow(−1, −∞)', pow(-1, -Infinity), NaN],
    ['pow(0.5, ∞)', pow(0.5, Infinity), 0],
    ['pow(2, −∞)', pow(2, -Infinity), 0],
    ['pow(0, −1)', pow(0, -1), Infinity],
    ['pow(−0, −3)', pow(-0, -3), -Infinity],
    ['pow(−0, −2)', pow(-0, -2), Infinity],
    ['pow(−8, 1/3)', pow(-8, 1 / 3), NaN],
    ['pow(−∞, 3)', pow(-Infinity, 3), -Infinity],
    ['pow(−∞, −3)', pow(-Infinity, -3), -0],
    ['pow(10, 309)', pow(10, 309), Infinity],
    ['pow(−10, 309)', pow(-10, 309), -Infinity],
    ['pow(10, −330)', pow(10, -330), 0],
    ['pow(2, −1074)', pow(2, -1074), 5e-324],
    ['pow(−1.5, 2^31 + 1)', pow(-1.5, 2 ** 31 + 1), -Infinity],
    ['pow(−0.5, 2^31 + 1)', pow(-0.5, 2 ** 31 + 1), -0],
    ['hypot(∞, NaN)', hypot(Infinity, NaN), Infinity],
    ['hypot(NaN, 1)', hypot(NaN, 1), NaN],
    ['hypot(−0, 0)', hypot(-0, 0), 0],
    ['hypot(1e308, 1e308)', hypot(1e308, 1e308), Math.hypot(1e308, 1e308)],
    ['hypot(5e-324, 5e-324)', hypot(5e-324, 5e-324), Math.hypot(5e-324, 5e-324)],
  ];
  it.each(cases)('%s', (label, computed, expected) => {
    // Object.is distinguishes −0 from +0 and treats NaN as equal to itself.
    if (!Object.is(computed, expected))
      throw new Error(`${label}: expected ${expected}, computed ${computed}`);
    expect(Object.is(computed, expected)).toBe(true);
  });

  it('signed zeros pass through the odd functions', () => {
    for (const f of [sin, atan, expm1, log1p]) {
      expect(Object.is(f(-0), -0)).toBe(true);
      expect(Object.is(f(0), 0)).toBe(true);
    }
  });

  it('subnormal arguments: exp tiny and log of the least subnormal', () => {
    // log(2^−1074) = −1074·ln 2 (identity), compared with the runtime within 1 ulp.
    expect(ulpDistance(log(5e-324), -1074 * Math.LN2)).toBeLessThanOrEqual(1);
    expect(exp(5e-324)).toBe(1);
    expect(sin(5e-324)).toBe(5e-324);
  });
});

describe('detMath exact results (identities)', () => {
  it('exp(0) = 1, log(1) = 0, log1p(0) = 0, expm1(0) = 0, atan(0) = 0', () => {
    expect(exp(0)).toBe(1);
    expect(log(1)).toBe(0);
    expect(log1p(0)).toBe(0);
    expect(expm1(0)).toBe(0);
    expect(atan(0)).toBe(0);
  });

  it('pow returns exact integer powers and exact square roots (fdlibm e_pow.c: exact when representable)', () => {
    expect(pow(2, 10)).toBe(1024);
    expect(pow(2, -3)).toBe(0.125);
    expect(pow(3, 20)).toBe(3486784401);
    expect(pow(-3, 3)).toBe(-27);
    expect(pow(10, 15)).toBe(1e15);
    expect(pow(2, 1023)).toBe(2 ** 1023);
    const u = uniforms(21);
    for (let i = 0; i < 2000; i++) {
      const x = 10 ** (40 * u() - 20);
      const got = pow(x, 0.5);
      if (got !== Math.sqrt(x)) throw new Error(`pow(${x}, 0.5) = ${got}, sqrt = ${Math.sqrt(x)}`);
    }
    for (let i = 0; i < 2000; i++) {
      const x = (u() - 0.5) * 1e100;
      expect(pow(x, 1)).toBe(x);
      expect(pow(x, 2)).toBe(x * x);
    }
  });

  it('sin(π) and cos(π/2) are the residuals of the rounded π (π − fl(π) = 1.2246467991473532e-16, from memory)', () => {
    expect(sin(Math.PI)).toBe(1.2246467991473532e-16);
    expect(cos(Math.PI / 2)).toBe(6.123233995736766e-17);
    expect(cos(Math.PI)).toBe(-1);
    expect(sin(Math.PI / 2)).toBe(1);
  });

  it('sin(1e22) to the last bit (K. C. Ng, "Argument reduction for huge arguments: good to the last bit", Sun, 1992: sin(10^22) = −0.8522008497671888017727…, from memory)', () => {
    expect(sin(1e22)).toBe(-0.8522008497671888);
  });

  it('hypot of Pythagorean triples is exact (3-4-5, 5-12-13, 20-21-29 scaled by 2^k)', () => {
    for (const [a, b, c] of [
      [3, 4, 5],
      [5, 12, 13],
      [20, 21, 29],
    ] as const) {
      for (const k of [-1070, -500, 0, 500, 1015]) {
        const s = 2 ** k;
        expect(hypot(a * s, b * s)).toBe(c * s);
      }
    }
  });
});

describe('detMath tables match their definitions', () => {
  /** ⌊π·2^bits⌋ by Machin's formula π = 16·atan(1/5) − 4·atan(1/239) in integer arithmetic (guard bits 64). */
  function piFixed(bits: number): bigint {
    const g = 64n;
    const one = 1n << (BigInt(bits) + g);
    const atanInv = (n: bigint): bigint => {
      let sum = 0n;
      let term = one / n;
      const n2 = n * n;
      for (let k = 0n; term !== 0n; k++) {
        sum += (k % 2n === 0n ? 1n : -1n) * (term / (2n * k + 1n));
        term /= n2;
      }
      return sum;
    };
    return (16n * atanInv(5n) - 4n * atanInv(239n)) >> g;
  }

  it('the 2/π table holds the first 1584 bits of 2/π (Machin 1706)', () => {
    const bits = 1584;
    // 2/π·2^1584 = 2^(1584 + 1 + P)/⌊π·2^P⌋ to within the error of the truncated π, with P = bits + 80.
    const P = bits + 80;
    const pi = piFixed(P);
    const twoOverPi = (1n << BigInt(bits + 1 + P)) / pi;
    const table = TWO_OVER_PI_24.reduce((acc, d) => (acc << 24n) | BigInt(d), 0n);
    // allow the last bit to differ from the truncation of the computed quotient (it carries the error of π)
    const diff = twoOverPi - table;
    expect(diff >= 0n && diff <= 1n).toBe(true);
  });

  it('the π/4 hex string holds the first 320 bits of π/4 (Machin 1706)', () => {
    const pi = piFixed(400);
    const quarter = pi >> (2n + 80n); // π/4·2^320
    expect(quarter.toString(16)).toBe(PI_OVER_4_HEX);
  });

  it('the npio2_hw table holds the high words of n·π/2 for n = 1..32', () => {
    for (let n = 1; n <= 32; n++) {
      F[0] = n * (Math.PI / 2);
      const hi = Number(U[0]! >> 32n);
      expect(hi.toString(16)).toBe(NPIO2_HW[n - 1]!.toString(16));
    }
  });
});

describe('detMath pinned bit patterns (determinism; oracle: fdlibm 5.3 algorithms as ported, recorded once)', () => {
  // These hex values were produced by this implementation; they pin that every runtime (Node, the browser) returns
  // the same bits. They were also compared with Node 20's Math.* at the time of recording (equal where fdlibm is).
  const pins: [string, number[], string][] = [
    ['exp', [1], '0x4005bf0a8b14576a'],
    ['exp', [-0.5], '0x3fe368b2fc6f960a'],
    ['exp', [700.5], '0x7f18625c7d4f56c2'],
    ['exp', [-744.4], '0x0000000000000001'],
    ['exp', [3.3e-9], '0x3ff0000000e2c637'],
    ['log', [2], '0x3fe62e42fefa39ef'],
    ['log', [1e-310], '0xc0864e69394d9508'],
    ['log', [0.7], '0xbfd6d3c324e13f50'],
    ['log', [123456.789], '0x40277281cad8a844'],
    ['pow', [1.0001, 12345.5], '0x400b7e32598c6c6c'],
    ['pow', [0.3, -7.25], '0x40b82253c23b0916'],
    ['pow', [-2.5, 17], '0xc156345785d8a000'],
    ['expm1', [0.00001], '0x3ee4f8bc681cdfb6'],
    ['expm1', [-3.2], '0xbfeeb2137660004c'],
    ['log1p', [-0.25], '0xbfd269621134db92'],
    ['log1p', [7e-12], '0x3d9ec94ca20fe324'],
    ['sin', [1], '0x3feaed548f090cee'],
    ['sin', [1e22], '0xbfeb453ab76bf397'],
    ['cos', [3], '0xbfefae04be85e5d2'],
    ['cos', [1e300], '0xbfe2699022adc4c1'],
    ['sin', [823549.5], '0xbfc4f8bacd318ed0'],
    ['atan', [0.6], '0x3fe14b1dd5f90ce1'],
    ['atan2', [-1, -3], '0xc0068f095fdf593c'],
    ['hypot', [3e200, 4e200], '0x699a20df0dcd3af0'],
  ];
  const fns: Record<string, (...a: number[]) => number> = {
    exp,
    log,
    pow: (x, y) => pow(x!, y!),
    expm1,
    log1p,
    sin,
    cos,
    atan,
    atan2: (y, x) => atan2(y!, x!),
    hypot: (x, y) => hypot(x!, y!),
  };
  it.each(pins)('%s(%j) has the pinned bits %s', (name, args, bits) => {
    const got = hex(fns[name]!(...args));
    if (got !== bits) throw new Error(`${name}(${args.join(', ')}): expected ${bits}, computed ${got}`);
    expect(got).toBe(bits);
  });
});
