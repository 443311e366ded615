/**
 * Immutable complex numbers for characteristic functions and Fourier pricing.
 * Branch cuts: `log`, `sqrt` and `pow` use the principal branch, with the cut on the negative real axis;
 * the argument lies in (−π, π], and on the cut the sign of a zero imaginary part picks the side
 * (im = +0 gives arg = +π, im = −0 gives arg = −π), as in C99 Annex G.
 */
import { atan2, cos, exp as detExp, hypot, log as detLog, sin } from './detMath.ts';
export class Complex {
  readonly re: number;
  readonly im: number;

  constructor(re: number, im: number) {
    this.re = re;
    this.im = im;
  }

  static of(re: number, im = 0): Complex {
    return new Complex(re, im);
  }

  /** r·e^{iθ}. */
  static fromPolar(r: number, theta: number): Complex {
    return new Complex(r * cos(theta), r * sin(theta));
  }

  static readonly ZERO = new Complex(0, 0);
  static readonly ONE = new Complex(1, 0);
  static readonly I = new Complex(0, 1);

  add(w: Complex): Complex {
    return new Complex(this.re + w.re, this.im + w.im);
  }

  sub(w: Complex): Complex {
    return new Complex(this.re - w.re, this.im - w.im);
  }

  mul(w: Complex): Complex {
    return new Complex(this.re * w.re - this.im * w.im, this.re * w.im + this.im * w.re);
  }

  /** Division by Smith's algorithm (R. L. Smith, "Algorithm 116: Complex division", CACM 5(8), 1962), avoiding overflow. */
  div(w: Complex): Complex {
    const { re: c, im: d } = w;
    if (Math.abs(c) >= Math.abs(d)) {
      if (c === 0 && d === 0) return new Complex(this.re / 0, this.im / 0);
      const r = d / c;
      const den = c + d * r;
      return new Complex((this.re + this.im * r) / den, (this.im - this.re * r) / den);
    }
    const r = c / d;
    const den = c * r + d;
    return new Complex((this.re * r + this.im) / den, (this.im * r - this.re) / den);
  }

  /** Multiplication by a real number k. */
  scale(k: number): Complex {
    return new Complex(this.re * k, this.im * k);
  }

  /** Adds a real number. */
  addReal(k: number): Complex {
    return new Complex(this.re + k, this.im);
  }

  neg(): Complex {
    return new Complex(-this.re, -this.im);
  }

  conj(): Complex {
    return new Complex(this.re, -this.im);
  }

  /** e^z = e^{re}(cos im + i sin im). */
  exp(): Complex {
    const m = detExp(this.re);
    if (this.im === 0) return new Complex(m, this.im);
    return new Complex(m * cos(this.im), m * sin(this.im));
  }

  /** Principal logarithm: ln|z| + i·arg z, arg in (−π, π]. log(0) = −∞ + i·arg. */
  log(): Complex {
    return new Complex(detLog(this.abs()), this.arg());
  }

  /**
   * Principal square root (real part ≥ 0), by the cancellation-free formula
   * t = √((|z| + |re|)/2) (W. Kahan, "Branch cuts for complex elementary functions", 1987).
   */
  sqrt(): Complex {
    const { re, im } = this;
    if (re === 0 && im === 0) return new Complex(0, im);
    const t = Math.sqrt((this.abs() + Math.abs(re)) / 2);
    if (re >= 0) return new Complex(t, im / (2 * t));
    const negIm = im < 0 || Object.is(im, -0);
    return new Complex(Math.abs(im) / (2 * t), negIm ? -t : t);
  }

  /** Modulus |z|, computed without overflow. */
  abs(): number {
    return hypot(this.re, this.im);
  }

  /** Principal argument in (−π, π]. */
  arg(): number {
    return atan2(this.im, this.re);
  }

  /** Principal power z^w = exp(w·log z); 0^w = 0 for re(w) > 0, 1 for w = 0. */
  pow(w: Complex | number): Complex {
    const e = typeof w === 'number' ? new Complex(w, 0) : w;
    if (this.re === 0 && this.im === 0) {
      if (e.re === 0 && e.im === 0) return Complex.ONE;
      if (e.re > 0) return Complex.ZERO;
    }
    return e.mul(this.log()).exp();
  }

  /** True when both parts are finite. */
  isFinite(): boolean {
    return Number.isFinite(this.re) && Number.isFinite(this.im);
  }

  equals(w: Complex): boolean {
    return this.re === w.re && this.im === w.im;
  }

  toString(): string {
    return `${this.re}${this.im < 0 || Object.is(this.im, -0) ? '-' : '+'}${Math.abs(this.im)}i`;
  }
}
