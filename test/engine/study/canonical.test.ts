import { describe, it, expect } from 'vitest';
import { canonicalJson } from '../../../src/engine/study/canonical.ts';

describe('canonicalJson', () => {
  // RFC 8785 (Rundgren, Jordan, Erdtman 2020), JSON Canonicalization Scheme, sec. 3.2.3: members sorted by UTF-16 code units.
  it('sorts keys at every depth and drops whitespace', () => {
    expect(canonicalJson({ b: 1, a: { d: [3, { z: 1, y: 2 }], c: 'x' } })).toBe(
      '{"a":{"c":"x","d":[3,{"y":2,"z":1}]},"b":1}',
    );
  });
  // RFC 8785 sec. 3.2.2.3 and ECMA-262 Number::toString: shortest text that reads back to the same double.
  it('writes numbers in shortest round-trip form', () => {
    const xs = [0.1, 1 / 3, 1e21, 1e-7, 123456789012345680000, 5e-324, 2 ** 53 + 2];
    for (const x of xs) {
      const s = canonicalJson(x);
      expect(Number(s), s).toBe(x);
    }
    expect(canonicalJson(1e21)).toBe('1e+21'); // RFC 8785 Appendix B sample: 1e+21
    expect(canonicalJson(0.000001)).toBe('0.000001'); // RFC 8785 Appendix B sample
    expect(canonicalJson(-0)).toBe('0'); // RFC 8785 Appendix B: minus zero is serialised as 0
  });
  it('is independent of key insertion order', () => {
    expect(canonicalJson({ x: 1, y: [1, 2] })).toBe(canonicalJson({ y: [1, 2], x: 1 }));
  });
  it('refuses non-finite numbers and names the field', () => {
    expect(() => canonicalJson({ results: { price: NaN } })).toThrow(/results\.price/);
    expect(() => canonicalJson([Infinity])).toThrow(/\[0\]/);
  });
  it('leaves out undefined members as JSON does', () => {
    expect(canonicalJson({ a: undefined, b: null })).toBe('{"b":null}');
  });
  it('reads back to the same value', () => {
    const v = { s: 'é "quoted" \n', n: [1.5, -2e-9], t: true, f: false, z: null };
    expect(JSON.parse(canonicalJson(v))).toEqual(v);
  });
});
