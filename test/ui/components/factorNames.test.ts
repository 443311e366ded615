import { describe, it, expect } from 'vitest';
import { driverName, factorShortName, pairName } from '../../../src/ui/components/factorNames.ts';

describe('factor and correlation-pair names', () => {
  it('writes each kind of correlation driver in words and keeps unknown ids as they are', () => {
    expect(driverName('eq:ALDR')).toBe('ALDR spot');
    expect(driverName('var:ALDR')).toBe('ALDR variance');
    expect(driverName('rate:DOM')).toBe('DOM short rate');
    expect(driverName('fx:ASHDOM')).toBe('ASHDOM FX');
    expect(driverName('odd')).toBe('odd');
    expect(driverName('new:X')).toBe('new:X');
  });
  it('joins the two drivers of a pair', () => {
    expect(pairName('eq:ALDR|rate:DOM')).toBe('ALDR spot – DOM short rate');
  });
  it('names the study factors shortly', () => {
    expect(factorShortName('stochVol')).toBe('Stochastic vol');
    expect(factorShortName('foreignRate')).toBe('Foreign rate');
    expect(factorShortName('somethingElse')).toBe('somethingElse');
  });
});
