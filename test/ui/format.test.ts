import { describe, it, expect } from 'vitest';
import { parseNumber, num, pct, bp } from '../../src/ui/components/format.ts';
import { parseCsv, CsvError } from '../../src/ui/components/csv.ts';

describe('numbers typed by people', () => {
  it('read plain, grouped, percent and basis-point forms', () => {
    expect(parseNumber('1,000.5')).toBe(1000.5);
    expect(parseNumber(' 2.5% ')).toBeCloseTo(0.025, 15);
    expect(parseNumber('25bp')).toBeCloseTo(0.0025, 15);
    expect(parseNumber('−0.3')).toBe(-0.3);
    expect(parseNumber('1e-4')).toBe(1e-4);
  });
  it('refuse anything else instead of guessing', () => {
    for (const t of ['', 'abc', '12k', '1.2.3', '--1', 'NaN', 'Infinity', '0x10'])
      expect(parseNumber(t), t).toBeNull();
  });
  it('are shown without NaN or a hyphen for minus', () => {
    expect(num(NaN)).toBe('—');
    expect(num(-0.5)).toBe('−0.5');
    expect(pct(0.0235)).toBe('2.35%');
    expect(bp(0.0001)).toBe('1.0 bp');
  });
});

describe('CSV tables', () => {
  it('read comma, semicolon or tab separated numbers with an optional header', () => {
    expect(parseCsv('t,rate\n1,0.02\n2,0.025')).toEqual({
      header: ['t', 'rate'],
      rows: [
        [1, 0.02],
        [2, 0.025],
      ],
    });
    expect(parseCsv('1;2%\n2;2.5%').rows[1]![1]).toBeCloseTo(0.025, 15);
    expect(parseCsv('1\t2\n3\t4').header).toBeNull();
  });
  it('name the cell that is not a number', () => {
    expect(() => parseCsv('t,rate\n1,0.02\n2,x')).toThrow(
      new CsvError('row 3, column 2: "x" is not a number'),
    );
    expect(() => parseCsv('\n\n')).toThrow(CsvError);
  });
});
