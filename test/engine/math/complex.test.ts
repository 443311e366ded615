import { describe, it, expect } from 'vitest';
import { Complex } from '../../../src/engine/math/complex.ts';

function close(label: string, a: Complex, b: Complex, tol: number): void {
  const d = a.sub(b).abs();
  const scale = Math.max(1, b.abs());
  if (!(d <= tol * scale))
    throw new Error(`${label}: expected ${b}, computed ${a}, |diff| ${d} > ${tol * scale}`);
  expect(d).toBeLessThanOrEqual(tol * scale);
}

const samples: Complex[] = [];
for (const re of [-3.5, -1, -0.2, 0, 0.3, 1, 2.7])
  for (const im of [-2.2, -0.5, 0.1, 1, 4]) samples.push(Complex.of(re, im));

describe('Complex', () => {
  it('does field arithmetic: (z·w)/w = z, z − z = 0, i² = −1', () => {
    close('i^2', Complex.I.mul(Complex.I), Complex.of(-1), 0);
    for (const z of samples)
      for (const w of samples) {
        close(`(${z}*${w})/${w}`, z.mul(w).div(w), z, 1e-15);
        close(`${z}+${w}-${w}`, z.add(w).sub(w), z, 1e-15);
      }
  });

  it('divides without overflow (Smith 1962)', () => {
    const big = Complex.of(1e300, 1e300);
    close('big/big', big.div(big), Complex.ONE, 1e-15);
  });

  it('satisfies exp(log z) = z and log(exp z) = z for |im z| < π', () => {
    for (const z of samples) {
      close(`exp(log ${z})`, z.log().exp(), z, 1e-15);
      if (Math.abs(z.im) < Math.PI) close(`log(exp ${z})`, z.exp().log(), z, 1e-15);
    }
  });

  it('has e^{iπ} = −1 and |e^{iθ}| = 1 (Euler, common practice)', () => {
    close('e^{i pi}', Complex.of(0, Math.PI).exp(), Complex.of(-1), 1e-15);
    for (let t = -5; t <= 5; t += 0.7) expect(Math.abs(Complex.of(0, t).exp().abs() - 1)).toBeLessThan(1e-15);
  });

  it('has principal sqrt with re ≥ 0 and sqrt(z)² = z', () => {
    for (const z of samples) {
      const s = z.sqrt();
      expect(s.re).toBeGreaterThanOrEqual(0);
      close(`sqrt(${z})^2`, s.mul(s), z, 1e-15);
    }
    // No cancellation for z = −1 + tiny·i.
    const s = Complex.of(-1, 1e-20).sqrt();
    expect(s.re).toBeCloseTo(5e-21, 35);
    expect(s.im).toBe(1);
  });

  it('puts the branch cut of log and sqrt on the negative real axis, side chosen by the sign of zero', () => {
    // C99 Annex G conventions (ISO/IEC 9899:1999, G.6.3.2 clog, G.6.4.2 csqrt): common practice.
    expect(Complex.of(-4, 0).sqrt()).toEqual(Complex.of(0, 2));
    expect(Complex.of(-4, -0).sqrt()).toEqual(Complex.of(0, -2));
    expect(Complex.of(-1, 0).log().im).toBe(Math.PI);
    expect(Complex.of(-1, -0).log().im).toBe(-Math.PI);
    // Just above / below the cut the argument jumps by 2π.
    expect(Complex.of(-1, 1e-12).arg() - Complex.of(-1, -1e-12).arg()).toBeCloseTo(2 * Math.PI, 10);
  });

  it('computes principal powers: i^i = e^{−π/2}, z^2 = z·z, z^{1/2} = sqrt z, 0^w', () => {
    close('i^i', Complex.I.pow(Complex.I), Complex.of(Math.exp(-Math.PI / 2)), 1e-15); // Euler, common practice
    for (const z of samples) {
      if (z.abs() === 0) continue;
      close(`${z}^2`, z.pow(2), z.mul(z), 1e-14);
      close(`${z}^0.5`, z.pow(0.5), z.sqrt(), 1e-14);
    }
    expect(Complex.ZERO.pow(2)).toEqual(Complex.ZERO);
    expect(Complex.ZERO.pow(0)).toEqual(Complex.ONE);
  });

  it('has abs, arg, conj, neg, scale consistent with polar form', () => {
    for (const z of samples) {
      close(`polar ${z}`, Complex.fromPolar(z.abs(), z.arg()), z, 1e-15);
      close(`z*conj z`, z.mul(z.conj()), Complex.of(z.abs() ** 2), 1e-14);
      close('neg', z.neg().add(z), Complex.ZERO, 0);
      close('scale', z.scale(2.5), z.mul(Complex.of(2.5)), 1e-15);
      close('addReal', z.addReal(1.5), z.add(Complex.of(1.5)), 0);
    }
    expect(Complex.of(3, 4).abs()).toBe(5);
    expect(Complex.of(1e300, 1e300).abs()).toBeCloseTo(Math.SQRT2 * 1e300, -285);
  });
});
