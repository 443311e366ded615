/**
 * Deterministic elementary functions: the same bits in every JavaScript runtime.
 *
 * The runtime's `Math.exp`, `Math.log`, `Math.pow`, `Math.sin`, ... are not specified to the last bit and differ
 * between engine versions, so a study saved in one runtime would not re-run bit for bit in another. Everything here
 * is built only from IEEE 754 basic operations (+ − × ÷, `Math.sqrt`, `Math.abs`, comparisons), which are correctly
 * rounded everywhere, and from reads/writes of the two 32-bit words of a double through a typed-array view.
 *
 * Sources (ports; comments beside each routine name its file):
 * - Sun Microsystems, fdlibm 5.3 (1993–2004): e_exp.c, e_log.c, e_pow.c, s_expm1.c, s_log1p.c, k_sin.c, k_cos.c,
 *   s_sin.c, s_cos.c, e_rem_pio2.c, s_atan.c, e_atan2.c. fdlibm documents an error below 1 ulp for each.
 *   Credit: "Copyright (C) 1993 by Sun Microsystems, Inc. All rights reserved. Developed at SunSoft, a Sun
 *   Microsystems, Inc. business. Permission to use, copy, modify, and distribute this software is freely granted,
 *   provided that this notice is preserved."
 * - Reduction of huge trigonometric arguments (|x| > 2^19·π/2): exact integer arithmetic with BigInt against 1584
 *   bits of 2/π, the idea of M. H. Payne and R. N. Hanek, "Radian reduction for trigonometric functions",
 *   SIGNUM Newsletter 18(1) (1983) 19–24 (fdlibm's k_rem_pio2.c does the same in floating point).
 * - hypot: scaling by a power of two, then Dekker's exact products and a corrected square root
 *   (T. J. Dekker, "A floating-point technique for extending the available precision", Numer. Math. 18 (1971)
 *   224–242: mul12 and the Veltkamp split).
 *
 * The scratch views below are the only module state; every function writes then reads them within one call, so no
 * value survives between calls (JavaScript runs one function at a time per thread).
 */

const F64 = new Float64Array(1);
const I32 = new Int32Array(F64.buffer);
const U32 = new Uint32Array(F64.buffer);
/** Index of the high (sign/exponent) word in the two-word view: 1 on little-endian hosts. */
const HI = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1 ? 1 : 0;
const LO = 1 - HI;

/** Double with the given high word and a low word of zero. */
function fromHigh(hi: number): number {
  I32[HI] = hi;
  U32[LO] = 0;
  return F64[0]!;
}

/** `x` with its low word cleared. */
function clearLow(x: number): number {
  F64[0] = x;
  U32[LO] = 0;
  return F64[0]!;
}

/** 2^k for integer k in [−1074, 1023], exact (built by repeated doubling from the least subnormal). */
const POW2 = new Float64Array(2098);
{
  let p = 5e-324;
  for (let i = 0; i < 2098; i++) {
    POW2[i] = p;
    p *= 2;
  }
}

const POW2_OFFSET = 1074;
const TWO_1023 = POW2[1023 + POW2_OFFSET]!;
const TWOM1000 = POW2[-1000 + POW2_OFFSET]!; // 2^−1000
const HUGE = 1e300;
const TINY = 1e-300;
const TWO54 = 1.8014398509481984e16;

// ---------------------------------------------------------------------------------------------------------- exp

// fdlibm 5.3 e_exp.c constants.
const O_THRESHOLD = 7.09782712893383973096e2;
const U_THRESHOLD = -7.4513321910194110842e2;
const LN2_HI = 6.9314718036912381649e-1;
const LN2_LO = 1.90821492927058770002e-10;
const INV_LN2 = 1.442695040888963387;
const P1 = 1.66666666666666019037e-1;
const P2 = -2.77777777770155933842e-3;
const P3 = 6.61375632143793436117e-5;
const P4 = -1.6533902205465251539e-6;
const P5 = 4.13813679705723846039e-8;
/** Doubles with the high words fdlibm's e_exp.c compares against, and a low word of zero. */
const EXP_BIG = fromHigh(0x40862e42);
const EXP_HALF_LN2 = fromHigh(0x3fd62e43);
const EXP_1P5_LN2 = fromHigh(0x3ff0a2b2);
const EXP_TINY = fromHigh(0x3e300000);

/**
 * e^x (fdlibm 5.3 e_exp.c): x = k·ln2 + r with |r| ≤ ln2/2 (Cody–Waite, ln2 in two parts), e^r from the Remez
 * rational form 1 + r + r·c/(2 − c), c = r − r²·(P1 + r²·(P2 + ...)), then scaled by 2^k. Error < 1 ulp.
 */
export function exp(x: number): number {
  // fdlibm branches on the high word hx of |x|; each test hx ≥ H is |x| ≥ (the double with high word H, low word 0),
  // so plain comparisons take the same branches without a pass through the word view (faster in the inner loops).
  if (x !== x) return x + x; // NaN
  const ax = x < 0 ? -x : x;
  const neg = x < 0;
  let hi = 0;
  let lo = 0;
  let k = 0;
  if (ax >= EXP_BIG) {
    // hx ≥ 0x40862e42: |x| ≥ 709.78
    if (x > O_THRESHOLD) return HUGE * HUGE; // overflow, and e^+∞ = +∞
    if (x < U_THRESHOLD) return TWOM1000 * TWOM1000; // underflow, and e^−∞ = 0
  }
  if (ax >= EXP_HALF_LN2) {
    // hx > 0x3fd62e42: |x| > ln2/2
    if (ax < EXP_1P5_LN2) {
      // hx < 0x3ff0a2b2: |x| < 1.5·ln2
      if (neg) {
        hi = x + LN2_HI;
        lo = -LN2_LO;
        k = -1;
      } else {
        hi = x - LN2_HI;
        lo = LN2_LO;
        k = 1;
      }
    } else {
      k = (INV_LN2 * x + (neg ? -0.5 : 0.5)) | 0;
      hi = x - k * LN2_HI;
      lo = k * LN2_LO;
    }
    x = hi - lo;
  } else if (ax < EXP_TINY) {
    // hx < 0x3e300000: |x| < 2^−28
    if (HUGE + x > 1) return 1 + x;
  }
  const t = x * x;
  const c = x - t * (P1 + t * (P2 + t * (P3 + t * (P4 + t * P5))));
  if (k === 0) return 1 - ((x * c) / (c - 2) - x);
  const y = 1 - (lo - (x * c) / (2 - c) - hi);
  if (k >= -1021) {
    if (k === 1024) return y * 2 * TWO_1023;
    return y * POW2[k + POW2_OFFSET]!;
  }
  return y * POW2[k + 1000 + POW2_OFFSET]! * TWOM1000;
}

// ---------------------------------------------------------------------------------------------------------- log

// fdlibm 5.3 e_log.c constants (also used by s_log1p.c as Lp1..Lp7).
const LG1 = 6.66666666666673513e-1;
const LG2 = 3.999999999940941908e-1;
const LG3 = 2.857142874366239149e-1;
const LG4 = 2.222219843214978396e-1;
const LG5 = 1.818357216161805012e-1;
const LG6 = 1.531383769920937332e-1;
const LG7 = 1.479819860511658591e-1;

/**
 * Natural logarithm (fdlibm 5.3 e_log.c): x = 2^k·(1 + f) with √2/2 < 1 + f < √2, log(1 + f) = f − s·(f − R) from
 * s = f/(2 + f) and a Remez polynomial R(s²), plus k·ln2 in two parts. log(±0) = −∞, log(x < 0) = NaN. Error < 1 ulp.
 */
export function log(x: number): number {
  F64[0] = x;
  let hx = I32[HI]!;
  let k = 0;
  if (hx < 0x00100000) {
    // x < 2^−1022
    if (x === 0) return -Infinity; // log(±0)
    if (hx < 0) return NaN;
    k -= 54;
    x *= TWO54; // scale up a subnormal
    F64[0] = x;
    hx = I32[HI]!;
  }
  if (hx >= 0x7ff00000) return x + x;
  const ke = (hx >> 20) - 1023;
  hx &= 0x000fffff;
  const i0 = (hx + 0x95f64) & 0x100000;
  // fdlibm sets the exponent field so that x becomes x·2^−(ke + i0/2^20) in [√2/2, √2); the product by that power
  // of two is the same value, exactly, without a second pass through the word view.
  const kk = ke + (i0 >> 20);
  x *= POW2[-kk + POW2_OFFSET]!;
  k += kk;
  const f = x - 1;
  if ((0x000fffff & (2 + hx)) < 3) {
    // −2^−20 ≤ f < 2^−20
    if (f === 0) {
      if (k === 0) return 0;
      return k * LN2_HI + k * LN2_LO;
    }
    const R0 = f * f * (0.5 - 0.33333333333333333 * f);
    if (k === 0) return f - R0;
    return k * LN2_HI - (R0 - k * LN2_LO - f);
  }
  const s = f / (2 + f);
  const z = s * s;
  let i = hx - 0x6147a;
  const w = z * z;
  const j = 0x6b851 - hx;
  const t1 = w * (LG2 + w * (LG4 + w * LG6));
  const t2 = z * (LG1 + w * (LG3 + w * (LG5 + w * LG7)));
  i |= j;
  const R = t2 + t1;
  if (i > 0) {
    const hfsq = 0.5 * f * f;
    if (k === 0) return f - (hfsq - s * (hfsq + R));
    return k * LN2_HI - (hfsq - (s * (hfsq + R) + k * LN2_LO) - f);
  }
  if (k === 0) return f - s * (f - R);
  return k * LN2_HI - (s * (f - R) - k * LN2_LO - f);
}

// -------------------------------------------------------------------------------------------------------- log1p

/**
 * log(1 + x), accurate for small x (fdlibm 5.3 s_log1p.c): 1 + x = 2^k·(1 + f) with the rounding error of 1 + x
 * carried as a correction c, then the e_log.c kernel. log1p(−1) = −∞, log1p(x < −1) = NaN. Error < 1 ulp.
 */
export function log1p(x: number): number {
  F64[0] = x;
  const hx = I32[HI]!;
  const ax = hx & 0x7fffffff;
  let k = 1;
  let f = 0;
  let hu = 0;
  let c = 0;
  if (hx < 0x3fda827a) {
    // x < 0.41422
    if (ax >= 0x3ff00000) {
      // x ≤ −1
      if (x === -1) return -Infinity;
      return NaN;
    }
    if (ax < 0x3e200000) {
      // |x| < 2^−29
      if (TWO54 + x > 0 && ax < 0x3c900000) return x; // |x| < 2^−54
      return x - x * x * 0.5;
    }
    if (hx > 0 || hx <= (0xbfd2bec4 | 0)) {
      // −0.2929 < x < 0.41422
      k = 0;
      f = x;
      hu = 1;
    }
  }
  if (hx >= 0x7ff00000) return x + x;
  if (k !== 0) {
    let u: number;
    if (hx < 0x43400000) {
      u = 1 + x;
      F64[0] = u;
      hu = I32[HI]!;
      k = (hu >> 20) - 1023;
      c = k > 0 ? 1 - (u - x) : x - (u - 1); // correction term
      c /= u;
    } else {
      u = x;
      F64[0] = u;
      hu = I32[HI]!;
      k = (hu >> 20) - 1023;
      c = 0;
    }
    hu &= 0x000fffff;
    F64[0] = u;
    if (hu < 0x6a09e) {
      I32[HI] = hu | 0x3ff00000; // normalise u
    } else {
      k += 1;
      I32[HI] = hu | 0x3fe00000; // normalise u/2
      hu = (0x00100000 - hu) >> 2;
    }
    u = F64[0]!;
    f = u - 1;
  }
  const hfsq = 0.5 * f * f;
  if (hu === 0) {
    // |f| < 2^−20
    if (f === 0) {
      if (k === 0) return 0;
      c += k * LN2_LO;
      return k * LN2_HI + c;
    }
    const R0 = hfsq * (1 - 0.66666666666666666 * f);
    if (k === 0) return f - R0;
    return k * LN2_HI - (R0 - (k * LN2_LO + c) - f);
  }
  const s = f / (2 + f);
  const z = s * s;
  const R = z * (LG1 + z * (LG2 + z * (LG3 + z * (LG4 + z * (LG5 + z * (LG6 + z * LG7))))));
  if (k === 0) return f - (hfsq - s * (hfsq + R));
  return k * LN2_HI - (hfsq - (s * (hfsq + R) + (k * LN2_LO + c)) - f);
}

// -------------------------------------------------------------------------------------------------------- expm1

// fdlibm 5.3 s_expm1.c constants.
const Q1 = -3.33333333333331316428e-2;
const Q2 = 1.58730158725481460165e-3;
const Q3 = -7.93650757867487942473e-5;
const Q4 = 4.00821782732936239552e-6;
const Q5 = -2.01099218183624371326e-7;

/**
 * e^x − 1, accurate for small x (fdlibm 5.3 s_expm1.c): the same reduction as exp, with the reduction error c
 * carried, a rational approximation of r·(e^r + 1)/(e^r − 1), and a reconstruction by cases on k. Error < 1 ulp.
 */
export function expm1(x: number): number {
  F64[0] = x;
  let hx = I32[HI]!;
  const neg = hx < 0;
  hx &= 0x7fffffff;
  let k = 0;
  let hi = 0;
  let lo = 0;
  let c = 0;
  if (hx >= 0x4043687a) {
    // |x| ≥ 56·ln2
    if (hx >= 0x40862e42) {
      // |x| ≥ 709.78
      if (hx >= 0x7ff00000) {
        if (((hx & 0xfffff) | U32[LO]!) !== 0) return x + x; // NaN
        return neg ? -1 : x;
      }
      if (x > O_THRESHOLD) return HUGE * HUGE;
    }
    if (neg) {
      if (x + TINY < 0) return TINY - 1; // −1 rounded
    }
  }
  if (hx > 0x3fd62e42) {
    // |x| > ln2/2
    if (hx < 0x3ff0a2b2) {
      if (!neg) {
        hi = x - LN2_HI;
        lo = LN2_LO;
        k = 1;
      } else {
        hi = x + LN2_HI;
        lo = -LN2_LO;
        k = -1;
      }
    } else {
      k = (INV_LN2 * x + (neg ? -0.5 : 0.5)) | 0;
      hi = x - k * LN2_HI;
      lo = k * LN2_LO;
    }
    x = hi - lo;
    c = hi - x - lo;
  } else if (hx < 0x3c900000) {
    // |x| < 2^−54: expm1(x) = x, raising inexact
    const t0 = HUGE + x;
    return x - (t0 - (HUGE + x));
  }
  const hfx = 0.5 * x;
  const hxs = x * hfx;
  const r1 = 1 + hxs * (Q1 + hxs * (Q2 + hxs * (Q3 + hxs * (Q4 + hxs * Q5))));
  let t = 3 - r1 * hfx;
  let e = hxs * ((r1 - t) / (6 - x * t));
  if (k === 0) return x - (x * e - hxs);
  e = x * (e - c) - c;
  e -= hxs;
  if (k === -1) return 0.5 * (x - e) - 0.5;
  if (k === 1) {
    if (x < -0.25) return -2 * (e - (x + 0.5));
    return 1 + 2 * (x - e);
  }
  let y: number;
  if (k <= -2 || k > 56) {
    y = 1 - (e - x);
    if (k === 1024) y = y * 2 * TWO_1023;
    else y = y * POW2[k + POW2_OFFSET]!;
    return y - 1;
  }
  if (k < 20) {
    t = 1 - POW2[-k + POW2_OFFSET]!; // 1 − 2^−k, exact
    y = t - (e - x);
    return y * POW2[k + POW2_OFFSET]!;
  }
  t = POW2[-k + POW2_OFFSET]!; // 2^−k
  y = x - (e + t);
  y += 1;
  return y * POW2[k + POW2_OFFSET]!;
}

// ---------------------------------------------------------------------------------------------------------- pow

// fdlibm 5.3 e_pow.c constants.
const BP1 = 1.5;
const DP_H1 = 5.84962487220764160156e-1;
const DP_L1 = 1.35003920212974897128e-8;
const TWO53 = 9007199254740992;
const L1 = 5.99999999999994648725e-1;
const L2 = 4.28571428578550184252e-1;
const L3 = 3.33333329818377432918e-1;
const L4 = 2.72728123808534006489e-1;
const L5 = 2.30660745775561754067e-1;
const L6 = 2.06975017800338417784e-1;
const LG2_ = 6.93147180559945286227e-1;
const LG2_H = 6.93147182464599609375e-1;
const LG2_L = -1.90465429995776804525e-9;
const OVT = 8.0085662595372944372e-17; // −(1024 − log2(ovfl + .5ulp))
const CP = 9.61796693925975554329e-1; // 2/(3·ln2)
const CP_H = 9.61796700954437255859e-1;
const CP_L = -7.02846165095275826516e-9;
const IVLN2 = 1.442695040888963387;
const IVLN2_H = 1.44269502162933349609;
const IVLN2_L = 1.92596299112661746887e-8;

/**
 * x^y (fdlibm 5.3 e_pow.c): log2(x) in extra precision t1 + t2, the product y·log2(x) split into p_h + p_l, then
 * 2^(p_h + p_l) as in exp, with the sign for negative x and odd integer y. Special cases as ECMAScript's `**`
 * (which follows fdlibm 5.3): x^±0 = 1 even for NaN, x^NaN = NaN, (±1)^±∞ = NaN, (x < 0)^non-integer = NaN.
 * Error < 1 ulp (fdlibm: "always returns the correct integer provided it is representable").
 */
export function pow(x: number, y: number): number {
  F64[0] = x;
  const hx = I32[HI]!;
  const lx = U32[LO]!;
  F64[0] = y;
  const hy = I32[HI]!;
  const ly = U32[LO]!;
  let ix = hx & 0x7fffffff;
  const iy = hy & 0x7fffffff;

  if ((iy | ly) === 0) return 1; // y = ±0
  if (
    ix > 0x7ff00000 ||
    (ix === 0x7ff00000 && lx !== 0) ||
    iy > 0x7ff00000 ||
    (iy === 0x7ff00000 && ly !== 0)
  )
    return x + y; // NaN

  // yisint: 0 y not an integer, 1 odd integer, 2 even integer (only needed for x < 0).
  let yisint = 0;
  if (hx < 0) {
    if (iy >= 0x43400000) yisint = 2;
    else if (iy >= 0x3ff00000) {
      const k = (iy >> 20) - 0x3ff;
      if (k > 20) {
        const j = ly >>> (52 - k);
        if ((j << (52 - k)) >>> 0 === ly) yisint = 2 - (j & 1);
      } else if (ly === 0) {
        const j = iy >> (20 - k);
        if (j << (20 - k) === iy) yisint = 2 - (j & 1);
      }
    }
  }

  // Special y.
  if (ly === 0) {
    if (iy === 0x7ff00000) {
      // y = ±∞
      if (((ix - 0x3ff00000) | lx) === 0) return NaN; // (±1)^±∞
      if (ix >= 0x3ff00000) return hy >= 0 ? y : 0; // |x| > 1
      return hy < 0 ? -y : 0; // |x| < 1
    }
    if (iy === 0x3ff00000) return hy < 0 ? 1 / x : x; // y = ±1
    if (hy === 0x40000000) return x * x; // y = 2
    if (hy === 0x3fe00000 && hx >= 0) return Math.sqrt(x); // y = 0.5, x ≥ +0
  }

  let ax = Math.abs(x);
  // Special x: ±0, ±∞, ±1.
  if (lx === 0 && (ix === 0x7ff00000 || ix === 0 || ix === 0x3ff00000)) {
    let z = ax;
    if (hy < 0) z = 1 / z;
    if (hx < 0) {
      if (((ix - 0x3ff00000) | yisint) === 0)
        z = NaN; // (−1)^non-integer
      else if (yisint === 1) z = -z;
    }
    return z;
  }

  if (hx < 0 && yisint === 0) return NaN; // (x < 0)^non-integer
  const s = hx < 0 && yisint === 1 ? -1 : 1; // sign of the result

  let t1: number;
  let t2: number;
  if (iy > 0x41e00000) {
    // |y| > 2^31
    if (iy > 0x43f00000) {
      // |y| > 2^64: must overflow or underflow
      if (ix <= 0x3fefffff) return hy < 0 ? HUGE * HUGE : TINY * TINY;
      if (ix >= 0x3ff00000) return hy > 0 ? HUGE * HUGE : TINY * TINY;
    }
    if (ix < 0x3fefffff) return hy < 0 ? s * HUGE * HUGE : s * TINY * TINY;
    if (ix > 0x3ff00000) return hy > 0 ? s * HUGE * HUGE : s * TINY * TINY;
    // |1 − x| ≤ 2^−20: log(x) by x − x²/2 + x³/3 − x⁴/4.
    const t = ax - 1;
    const w = t * t * (0.5 - t * (0.3333333333333333333333 - t * 0.25));
    const u = IVLN2_H * t;
    const v = t * IVLN2_L - w * IVLN2;
    t1 = clearLow(u + v);
    t2 = v - (t1 - u);
  } else {
    let n = 0;
    if (ix < 0x00100000) {
      // subnormal x
      ax *= TWO53;
      n -= 53;
      F64[0] = ax;
      ix = I32[HI]!;
    }
    n += (ix >> 20) - 0x3ff;
    const j = ix & 0x000fffff;
    ix = j | 0x3ff00000; // normalise
    let k: number;
    if (j <= 0x3988e)
      k = 0; // |x| < √(3/2)
    else if (j < 0xbb67a)
      k = 1; // |x| < √3
    else {
      k = 0;
      n += 1;
      ix -= 0x00100000;
    }
    F64[0] = ax;
    I32[HI] = ix;
    ax = F64[0]!;
    const bp = k === 0 ? 1 : BP1;
    // ss = s_h + s_l = (x − 1)/(x + 1) or (x − 1.5)/(x + 1.5).
    let u = ax - bp;
    let v = 1 / (ax + bp);
    const ss = u * v;
    const sH = clearLow(ss);
    let tH = fromHigh(((ix >> 1) | 0x20000000) + 0x00080000 + (k << 18)); // high part of ax + bp
    let tL = ax - (tH - bp);
    const sL = v * (u - sH * tH - sH * tL);
    // log(ax)
    let s2 = ss * ss;
    let r = s2 * s2 * (L1 + s2 * (L2 + s2 * (L3 + s2 * (L4 + s2 * (L5 + s2 * L6)))));
    r += sL * (sH + ss);
    s2 = sH * sH;
    tH = clearLow(3 + s2 + r);
    tL = r - (tH - 3 - s2);
    // u + v = ss·(1 + ...)
    u = sH * tH;
    v = sL * tH + tL * ss;
    // 2/(3·ln2)·(ss + ...)
    const pH = clearLow(u + v);
    const pL = v - (pH - u);
    const zH = CP_H * pH;
    const zL = CP_L * pH + pL * CP + (k === 0 ? 0 : DP_L1);
    // log2(ax) = (ss + ...)·2/(3·ln2) = n + dp_h + z_h + z_l
    const dpH = k === 0 ? 0 : DP_H1;
    const t = n;
    t1 = clearLow(zH + zL + dpH + t);
    t2 = zL - (t1 - t - dpH - zH);
  }

  // (y1 + y2)·(t1 + t2), y split into high and low parts.
  const y1 = clearLow(y);
  let pL = (y - y1) * t1 + y * t2;
  let pH = y1 * t1;
  let z = pL + pH;
  F64[0] = z;
  let j = I32[HI]!;
  let i = U32[LO]!;
  if (j >= 0x40900000) {
    // z ≥ 1024
    if (((j - 0x40900000) | i) !== 0) return s * HUGE * HUGE;
    if (pL + OVT > z - pH) return s * HUGE * HUGE;
  } else if ((j & 0x7fffffff) >= 0x4090cc00) {
    // z ≤ −1075
    if (((j - 0xc090cc00) | i) !== 0) return s * TINY * TINY;
    if (pL <= z - pH) return s * TINY * TINY;
  }
  // 2^(p_h + p_l)
  i = j & 0x7fffffff;
  let k = (i >> 20) - 0x3ff;
  let n = 0;
  if (i > 0x3fe00000) {
    // |z| > 0.5: n = [z + 0.5]
    n = j + (0x00100000 >> (k + 1));
    k = ((n & 0x7fffffff) >> 20) - 0x3ff;
    const t = fromHigh(n & ~(0x000fffff >> k));
    n = ((n & 0x000fffff) | 0x00100000) >> (20 - k);
    if (j < 0) n = -n;
    pH -= t;
  }
  const t = clearLow(pL + pH);
  const u = t * LG2_H;
  const v = (pL - (t - pH)) * LG2_ + t * LG2_L;
  z = u + v;
  const w = v - (z - u);
  const tt = z * z;
  const tt1 = z - tt * (P1 + tt * (P2 + tt * (P3 + tt * (P4 + tt * P5))));
  const r = (z * tt1) / (tt1 - 2) - (w + z * w);
  z = 1 - (r - z);
  F64[0] = z;
  j = I32[HI]! + (n << 20);
  if (j >> 20 <= 0) {
    // subnormal result: scalbn(z, n), one rounding
    z = z * POW2[n + 1000 + POW2_OFFSET]! * TWOM1000;
  } else {
    I32[HI] = j;
    z = F64[0]!;
  }
  return s * z;
}

// ---------------------------------------------------------------------------------------------------- sin / cos

// fdlibm 5.3 k_sin.c constants.
const S1 = -1.66666666666666324348e-1;
const S2 = 8.33333333332248946124e-3;
const S3 = -1.98412698298579493134e-4;
const S4 = 2.75573137070700676789e-6;
const S5 = -2.50507602534068634195e-8;
const S6 = 1.58969099521155010221e-10;

/** sin(x + y) on [−π/4, π/4], y the tail of x (fdlibm 5.3 k_sin.c); iy = 0 when y is known to be 0. */
function kernelSin(x: number, y: number, iy: number): number {
  F64[0] = x;
  const ix = I32[HI]! & 0x7fffffff;
  if (ix < 0x3e400000) {
    // |x| < 2^−27
    if ((x | 0) === 0) return x;
  }
  const z = x * x;
  const v = z * x;
  const r = S2 + z * (S3 + z * (S4 + z * (S5 + z * S6)));
  if (iy === 0) return x + v * (S1 + z * r);
  return x - (z * (0.5 * y - v * r) - y - v * S1);
}

// fdlibm 5.3 k_cos.c constants.
const C1 = 4.16666666666666019037e-2;
const C2 = -1.38888888888741095749e-3;
const C3 = 2.48015872894767294178e-5;
const C4 = -2.75573143513906633035e-7;
const C5 = 2.0875723212981748279e-9;
const C6 = -1.13596475577881948265e-11;

/** cos(x + y) on [−π/4, π/4], y the tail of x (fdlibm 5.3 k_cos.c). */
function kernelCos(x: number, y: number): number {
  F64[0] = x;
  const ix = I32[HI]! & 0x7fffffff;
  if (ix < 0x3e400000) {
    // |x| < 2^−27
    if ((x | 0) === 0) return 1;
  }
  const z = x * x;
  const r = z * (C1 + z * (C2 + z * (C3 + z * (C4 + z * (C5 + z * C6)))));
  if (ix < 0x3fd33333) return 1 - (0.5 * z - (z * r - x * y)); // |x| < 0.3
  const qx = ix > 0x3fe90000 ? 0.28125 : fromHigh(ix - 0x00200000); // x/4 rounded down
  const hz = 0.5 * z - qx;
  const a = 1 - qx;
  return a - (hz - (z * r - x * y));
}

// fdlibm 5.3 e_rem_pio2.c constants.
const INV_PIO2 = 6.36619772367581382433e-1;
const PIO2_1 = 1.57079632673412561417; // first 33 bits of π/2
const PIO2_1T = 6.07710050650619224932e-11; // π/2 − PIO2_1
const PIO2_2 = 6.0771005063039659766e-11; // second 33 bits
const PIO2_2T = 2.02226624879595063154e-21;
const PIO2_3 = 2.0222662487111664558e-21; // third 33 bits
const PIO2_3T = 8.47842766036889956997e-32;
/** High words of n·π/2 for n = 1..32 (fdlibm 5.3 e_rem_pio2.c npio2_hw). */
export const NPIO2_HW: readonly number[] = [
  0x3ff921fb, 0x400921fb, 0x4012d97c, 0x401921fb, 0x401f6a7a, 0x4022d97c, 0x4025fdbb, 0x402921fb, 0x402c463a,
  0x402f6a7a, 0x4031475c, 0x4032d97c, 0x40346b9c, 0x4035fdbb, 0x40378fdb, 0x403921fb, 0x403ab41b, 0x403c463a,
  0x403dd85a, 0x403f6a7a, 0x40407e4c, 0x4041475c, 0x4042106c, 0x4042d97c, 0x4043a28c, 0x40446b9c, 0x404534ac,
  0x4045fdbb, 0x4046c6cb, 0x40478fdb, 0x404858eb, 0x404921fb,
];

/**
 * 2/π to 1584 bits after the binary point, 24 bits per entry (fdlibm 5.3 k_rem_pio2.c ipio2; checked against
 * Machin's formula in the tests).
 */
export const TWO_OVER_PI_24: readonly number[] = [
  0xa2f983, 0x6e4e44, 0x1529fc, 0x2757d1, 0xf534dd, 0xc0db62, 0x95993c, 0x439041, 0xfe5163, 0xabdebb,
  0xc561b7, 0x246e3a, 0x424dd2, 0xe00649, 0x2eea09, 0xd1921c, 0xfe1deb, 0x1cb129, 0xa73ee8, 0x8235f5,
  0x2ebb44, 0x84e99c, 0x7026b4, 0x5f7e41, 0x3991d6, 0x398353, 0x39f49c, 0x845f8b, 0xbdf928, 0x3b1ff8,
  0x97ffde, 0x05980f, 0xef2f11, 0x8b5a0a, 0x6d1f6d, 0x367ecf, 0x27cb09, 0xb74f46, 0x3f669e, 0x5fea2d,
  0x7527ba, 0xc7ebe5, 0xf17b3d, 0x0739f7, 0x8a5292, 0xea6bfb, 0x5fb11f, 0x8d5d08, 0x560330, 0x46fc7b,
  0x6babf0, 0xcfbc20, 0x9af436, 0x1da9e3, 0x91615e, 0xe61b08, 0x659985, 0x5f14a0, 0x68408d, 0xffd880,
  0x4d7327, 0x310606, 0x1556ca, 0x73a8c9, 0x60e27b, 0xc08c6b,
];

/** π/4 to 320 bits after the binary point, hexadecimal (checked against Machin's formula in the tests). */
export const PI_OVER_4_HEX =
  'c90fdaa22168c234c4c6628b80dc1cd129024e088a67cc74020bbea63b139b22514a08798e3404dd';

const TWO_OVER_PI_BITS = 1584;
const TWO_OVER_PI_FIXED: bigint = TWO_OVER_PI_24.reduce((acc, d) => (acc << 24n) | BigInt(d), 0n);
/** Bits kept of the fraction of x·2/π. */
const FRAC_BITS = 192n;
/** π/2 scaled by 2^PIO2_SHIFT, truncated (π/4 bits shifted by one). */
const PIO2_SHIFT = 256n;
const PIO2_FIXED: bigint = BigInt('0x' + PI_OVER_4_HEX.slice(0, 64)) << 1n;
const FRAC_MASK = (1n << FRAC_BITS) - 1n;
const FRAC_HALF = 1n << (FRAC_BITS - 1n);
/** 2^−(FRAC_BITS + PIO2_SHIFT) = 2^−448. */
const SCALE_DOWN = POW2[-Number(FRAC_BITS + PIO2_SHIFT) + POW2_OFFSET]!;

/**
 * Reduction of x by π/2: returns n with x = n·π/2 + (y0 + y1), |y0 + y1| ≤ ~π/4, writing y0 and y1 into `out`
 * (fdlibm 5.3 e_rem_pio2.c up to |x| ≤ 2^19·π/2: three-part Cody–Waite; beyond, an exact BigInt product with 2/π).
 */
function remPio2(x: number, hx: number, out: Float64Array): number {
  const ix = hx & 0x7fffffff;
  if (ix < 0x4002d97c) {
    // |x| < 3π/4: n = ±1
    if (hx > 0) {
      let z = x - PIO2_1;
      if (ix !== 0x3ff921fb) {
        out[0] = z - PIO2_1T;
        out[1] = z - out[0]! - PIO2_1T;
      } else {
        // x near π/2: 33 + 53 bits of π/2
        z -= PIO2_2;
        out[0] = z - PIO2_2T;
        out[1] = z - out[0]! - PIO2_2T;
      }
      return 1;
    }
    let z = x + PIO2_1;
    if (ix !== 0x3ff921fb) {
      out[0] = z + PIO2_1T;
      out[1] = z - out[0]! + PIO2_1T;
    } else {
      z += PIO2_2;
      out[0] = z + PIO2_2T;
      out[1] = z - out[0]! + PIO2_2T;
    }
    return -1;
  }
  if (ix <= 0x413921fb) {
    // |x| ≤ 2^19·π/2: medium size
    let t = Math.abs(x);
    const n = (t * INV_PIO2 + 0.5) | 0;
    const fn = n;
    let r = t - fn * PIO2_1;
    let w = fn * PIO2_1T; // first round, good to 85 bits
    let y0: number;
    if (n < 32 && ix !== NPIO2_HW[n - 1]) {
      y0 = r - w;
    } else {
      const j = ix >> 20;
      y0 = r - w;
      F64[0] = y0;
      let i = j - ((I32[HI]! >> 20) & 0x7ff);
      if (i > 16) {
        // second iteration, good to 118 bits
        t = r;
        w = fn * PIO2_2;
        r = t - w;
        w = fn * PIO2_2T - (t - r - w);
        y0 = r - w;
        F64[0] = y0;
        i = j - ((I32[HI]! >> 20) & 0x7ff);
        if (i > 49) {
          // third iteration, 151 bits
          t = r;
          w = fn * PIO2_3;
          r = t - w;
          w = fn * PIO2_3T - (t - r - w);
          y0 = r - w;
        }
      }
    }
    const y1 = r - y0 - w;
    if (hx < 0) {
      out[0] = -y0;
      out[1] = -y1;
      return -n;
    }
    out[0] = y0;
    out[1] = y1;
    return n;
  }
  // Huge |x|: x = m·2^e exactly; x·2/π = m·P·2^(e − 1584) with P = ⌊2^1584·2/π⌋ (truncation error < 2^−560).
  F64[0] = x;
  const lx = U32[LO]!;
  const e = (ix >> 20) - 1075; // exponent of the last mantissa bit (x is normal here)
  const m = (BigInt((ix & 0x000fffff) | 0x00100000) << 32n) | BigInt(lx);
  const prod = m * TWO_OVER_PI_FIXED;
  const shift = BigInt(TWO_OVER_PI_BITS - e); // > FRAC_BITS since e ≤ 971
  let n = Number((prod >> shift) & 3n);
  let frac = (prod >> (shift - FRAC_BITS)) & FRAC_MASK; // fraction of x·2/π, 192 bits
  if (frac >= FRAC_HALF) {
    frac -= 1n << FRAC_BITS;
    n = (n + 1) & 3;
  }
  const prodPio2 = frac * PIO2_FIXED; // (x mod π/2)·2^448
  const headInt = Number(prodPio2); // rounded to nearest
  const tail = Number(prodPio2 - BigInt(headInt));
  let y0 = headInt * SCALE_DOWN;
  let y1 = tail * SCALE_DOWN;
  if (hx < 0) {
    y0 = -y0;
    y1 = -y1;
    n = -n;
  }
  out[0] = y0;
  out[1] = y1;
  return n;
}

const REM = new Float64Array(2);

/**
 * Sine (fdlibm 5.3 s_sin.c): reduction by π/2 (see remPio2), then the k_sin.c / k_cos.c kernels by quadrant.
 * sin(±∞) = sin(NaN) = NaN. Error < 1 ulp.
 */
export function sin(x: number): number {
  F64[0] = x;
  const hx = I32[HI]!;
  const ix = hx & 0x7fffffff;
  if (ix <= 0x3fe921fb) return kernelSin(x, 0, 0); // |x| ≤ π/4
  if (ix >= 0x7ff00000) return NaN;
  const n = remPio2(x, hx, REM);
  const y0 = REM[0]!;
  const y1 = REM[1]!;
  switch (n & 3) {
    case 0:
      return kernelSin(y0, y1, 1);
    case 1:
      return kernelCos(y0, y1);
    case 2:
      return -kernelSin(y0, y1, 1);
    default:
      return -kernelCos(y0, y1);
  }
}

/**
 * Cosine (fdlibm 5.3 s_cos.c): reduction by π/2 (see remPio2), then the kernels by quadrant.
 * cos(±∞) = cos(NaN) = NaN. Error < 1 ulp.
 */
export function cos(x: number): number {
  F64[0] = x;
  const hx = I32[HI]!;
  const ix = hx & 0x7fffffff;
  if (ix <= 0x3fe921fb) return kernelCos(x, 0); // |x| ≤ π/4
  if (ix >= 0x7ff00000) return NaN;
  const n = remPio2(x, hx, REM);
  const y0 = REM[0]!;
  const y1 = REM[1]!;
  switch (n & 3) {
    case 0:
      return kernelCos(y0, y1);
    case 1:
      return -kernelSin(y0, y1, 1);
    case 2:
      return -kernelCos(y0, y1);
    default:
      return kernelSin(y0, y1, 1);
  }
}

// --------------------------------------------------------------------------------------------------------- atan

// fdlibm 5.3 s_atan.c constants: atan(0.5), atan(1), atan(1.5), atan(∞) in two parts, and the odd polynomial.
const ATAN_HI = [
  4.63647609000806093515e-1, 7.85398163397448278999e-1, 9.82793723247329054082e-1, 1.570796326794896558,
];
const ATAN_LO = [
  2.26987774529616870924e-17, 3.06161699786838301793e-17, 1.39033110312309984516e-17,
  6.12323399573676603587e-17,
];
const AT0 = 3.33333333333329318027e-1;
const AT1 = -1.99999999998764832476e-1;
const AT2 = 1.42857142725034663711e-1;
const AT3 = -1.1111110405462355788e-1;
const AT4 = 9.09088713343650656196e-2;
const AT5 = -7.69187620504482999495e-2;
const AT6 = 6.66107313738753120669e-2;
const AT7 = -5.83357013379057348645e-2;
const AT8 = 4.97687799461593236017e-2;
const AT9 = -3.6531572744216915527e-2;
const AT10 = 1.62858201153657823623e-2;

/**
 * Arctangent in (−π/2, π/2) (fdlibm 5.3 s_atan.c): |x| is mapped to one of five intervals around 0, 0.5, 1, 1.5, ∞
 * by an exact-ish Möbius step, then an odd polynomial of degree 23. Error < 1 ulp.
 */
export function atan(x: number): number {
  F64[0] = x;
  const hx = I32[HI]!;
  const ix = hx & 0x7fffffff;
  let id: number;
  if (ix >= 0x44100000) {
    // |x| ≥ 2^66
    if (ix > 0x7ff00000 || (ix === 0x7ff00000 && U32[LO]! !== 0)) return x + x; // NaN
    return hx > 0 ? ATAN_HI[3]! + ATAN_LO[3]! : -ATAN_HI[3]! - ATAN_LO[3]!;
  }
  if (ix < 0x3fdc0000) {
    // |x| < 0.4375
    if (ix < 0x3e200000) {
      // |x| < 2^−29
      if (HUGE + x > 1) return x;
    }
    id = -1;
  } else {
    x = Math.abs(x);
    if (ix < 0x3ff30000) {
      // |x| < 1.1875
      if (ix < 0x3fe60000) {
        // 7/16 ≤ |x| < 11/16
        id = 0;
        x = (2 * x - 1) / (2 + x);
      } else {
        // 11/16 ≤ |x| < 19/16
        id = 1;
        x = (x - 1) / (x + 1);
      }
    } else if (ix < 0x40038000) {
      // |x| < 2.4375
      id = 2;
      x = (x - 1.5) / (1 + 1.5 * x);
    } else {
      // 2.4375 ≤ |x| < 2^66
      id = 3;
      x = -1 / x;
    }
  }
  const z = x * x;
  const w = z * z;
  const s1 = z * (AT0 + w * (AT2 + w * (AT4 + w * (AT6 + w * (AT8 + w * AT10)))));
  const s2 = w * (AT1 + w * (AT3 + w * (AT5 + w * (AT7 + w * AT9))));
  if (id < 0) return x - x * (s1 + s2);
  const r = ATAN_HI[id]! - (x * (s1 + s2) - ATAN_LO[id]! - x);
  return hx < 0 ? -r : r;
}

// fdlibm 5.3 e_atan2.c constants.
const PI_O_4 = 7.85398163397448279e-1;
const PI_O_2 = 1.570796326794896558;
const PI = 3.141592653589793116;
const PI_LO = 1.2246467991473531772e-16;

/**
 * Angle of the point (x, y) in [−π, π] (fdlibm 5.3 e_atan2.c): atan(|y/x|) corrected by quadrant with π in two
 * parts; signed zeros and infinities as fdlibm (and ECMAScript). Error < 2 ulp in fdlibm's statement (the quadrant
 * correction adds one rounding to atan's); measured below 1 ulp against the runtime in the tests.
 */
export function atan2(y: number, x: number): number {
  if (x !== x || y !== y) return x + y; // NaN
  F64[0] = x;
  const hx = I32[HI]!;
  const lx = U32[LO]!;
  const ix = hx & 0x7fffffff;
  F64[0] = y;
  const hy = I32[HI]!;
  const ly = U32[LO]!;
  const iy = hy & 0x7fffffff;
  if (((hx - 0x3ff00000) | lx) === 0) return atan(y); // x = 1
  const m = ((hy >> 31) & 1) | ((hx >> 30) & 2); // 2·sign(x) + sign(y)
  if ((iy | ly) === 0) {
    // y = ±0
    if (m <= 1) return y; // atan(±0, +anything) = ±0
    return m === 2 ? PI + TINY : -PI - TINY; // atan(±0, −anything) = ±π
  }
  if ((ix | lx) === 0) return hy < 0 ? -PI_O_2 - TINY : PI_O_2 + TINY; // x = ±0
  if (ix === 0x7ff00000) {
    if (iy === 0x7ff00000) {
      if (m === 0) return PI_O_4 + TINY;
      if (m === 1) return -PI_O_4 - TINY;
      if (m === 2) return 3 * PI_O_4 + TINY;
      return -3 * PI_O_4 - TINY;
    }
    if (m === 0) return 0;
    if (m === 1) return -0;
    if (m === 2) return PI + TINY;
    return -PI - TINY;
  }
  if (iy === 0x7ff00000) return hy < 0 ? -PI_O_2 - TINY : PI_O_2 + TINY;
  const k = (iy - ix) >> 20;
  let z: number;
  if (k > 60)
    z = PI_O_2 + 0.5 * PI_LO; // |y/x| > 2^60
  else if (hx < 0 && k < -60)
    z = 0; // |y|/x < −2^60
  else z = atan(Math.abs(y / x));
  switch (m) {
    case 0:
      return z;
    case 1:
      return -z;
    case 2:
      return PI - (z - PI_LO);
    default:
      return z - PI_LO - PI;
  }
}

// -------------------------------------------------------------------------------------------------------- hypot

const SPLIT = 134217729; // 2^27 + 1, Veltkamp's splitter

/**
 * √(x² + y²) without overflow or underflow, the same bits everywhere: both arguments scaled by a power of two near
 * the larger, the squares summed exactly as a double-double (Dekker 1971, mul12 with the Veltkamp split), then the
 * square root corrected once by the exact residual. hypot(±∞, anything) = +∞ (even NaN), else NaN propagates.
 */
export function hypot(x: number, y: number): number {
  let a = Math.abs(x);
  let b = Math.abs(y);
  if (a === Infinity || b === Infinity) return Infinity;
  if (a !== a || b !== b) return NaN;
  if (a < b) {
    const t = a;
    a = b;
    b = t;
  }
  if (a === 0) return 0;
  if (b === 0) return a;
  // scale a to [1, 2): exponent of a
  F64[0] = a;
  let ea = ((I32[HI]! >> 20) & 0x7ff) - 1023;
  if (ea === -1023) {
    // subnormal a: scale up first
    a *= TWO54;
    b *= TWO54;
    const r = hypot(a, b);
    return r * POW2[-54 + POW2_OFFSET]!;
  }
  if (ea > 1000) ea = 1000; // keep 2^−ea representable
  const down = POW2[-ea + POW2_OFFSET]!;
  const up = POW2[ea + POW2_OFFSET]!;
  a *= down; // exact
  b *= down; // exact unless b falls far below a (then b² is negligible)
  // Exact squares: a² = aa + aaLo, b² = bb + bbLo (Dekker mul12).
  const aa = a * a;
  let c = SPLIT * a;
  let ah = c - (c - a);
  let al = a - ah;
  const aaLo = ah * ah - aa + 2 * ah * al + al * al;
  const bb = b * b;
  c = SPLIT * b;
  const bh = c - (c - b);
  const bl = b - bh;
  const bbLo = bh * bh - bb + 2 * bh * bl + bl * bl;
  // s = aa + bb exactly as s + sLo (Knuth's two-sum), plus the low parts.
  const s = aa + bb;
  const bv = s - aa;
  const sLo = aa - (s - bv) + (bb - bv) + aaLo + bbLo;
  const r = Math.sqrt(s);
  // Residual (s + sLo) − r² with r² exact, then r + residual/(2r).
  const rr = r * r;
  c = SPLIT * r;
  ah = c - (c - r);
  al = r - ah;
  const rrLo = ah * ah - rr + 2 * ah * al + al * al;
  const res = s - rr - rrLo + sLo;
  return (r + res / (2 * r)) * up;
}

/**
 * Euclidean norm √(Σ xᵢ²) of any number of values without overflow or underflow, the same bits everywhere: scaled by
 * a power of two near the largest |xᵢ| (exact), squares summed in index order, one square root (IEEE, correctly
 * rounded), scaled back. Relative error below (n/2 + 1) ulp (common practice). +∞ if any value is infinite, else NaN
 * if any is NaN; 0 for no values.
 */
export function hypotOf(values: readonly number[]): number {
  const n = values.length;
  let m = 0;
  let nan = false;
  for (let i = 0; i < n; i++) {
    const a = Math.abs(values[i]!);
    if (a === Infinity) return Infinity;
    if (a !== a) nan = true;
    else if (a > m) m = a;
  }
  if (nan) return NaN;
  if (m === 0) return 0;
  F64[0] = m;
  let e = ((I32[HI]! >> 20) & 0x7ff) - 1023;
  if (e === -1023) e = -1022; // subnormal largest value: 2^1022 scales it up exactly
  if (e > 1000) e = 1000;
  const down = POW2[-e + POW2_OFFSET]!;
  let s = 0;
  for (let i = 0; i < n; i++) {
    const a = values[i]! * down;
    s += a * a;
  }
  return Math.sqrt(s) * POW2[e + POW2_OFFSET]!;
}
