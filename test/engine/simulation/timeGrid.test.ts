import { describe, it, expect } from 'vitest';
import { makeTimeGrid } from '../../../src/engine/simulation/timeGrid.ts';
import { EngineError } from '../../../src/engine/errors.ts';

describe('time grid', () => {
  it('contains every event time, keeps its index, and no step exceeds maxStep', () => {
    const g = makeTimeGrid([1, 0.3, 2.5, 1], 0.4, [0.75, 7]);
    expect(g.times[0]).toBe(0);
    expect(g.eventIndex.map((k) => g.times[k])).toEqual([1, 0.3, 2.5, 1]);
    expect(Array.from(g.times)).toContain(0.75);
    expect(g.times[g.times.length - 1]).toBe(2.5);
    for (let k = 1; k < g.times.length; k++) {
      const h = g.times[k]! - g.times[k - 1]!;
      expect(h).toBeGreaterThan(0);
      expect(h).toBeLessThanOrEqual(0.4 + 1e-12);
    }
    expect(g.indexOf(2.5)).toBe(g.times.length - 1);
  });

  it('rejects bad settings with an error naming the setting', () => {
    const bad = (f: () => unknown, field: RegExp) => {
      try {
        f();
        expect.unreachable();
      } catch (e) {
        expect(e).toBeInstanceOf(EngineError);
        expect((e as EngineError).message).toMatch(field);
      }
    };
    bad(() => makeTimeGrid([1], 0), /grid\.maxStep/);
    bad(() => makeTimeGrid([1], NaN), /grid\.maxStep/);
    bad(() => makeTimeGrid([1], 2), /grid\.maxStep must not exceed the horizon/);
    bad(() => makeTimeGrid([1, -1], 0.5), /grid\.eventTimes\[1\]/);
    bad(() => makeTimeGrid([], 0.5), /grid\.eventTimes/);
    bad(
      () => makeTimeGrid([1], 0.5).indexOf(0.3, 'payoff.expiry'),
      /payoff\.expiry 0\.3 is not a simulation grid time/,
    );
  });
});
