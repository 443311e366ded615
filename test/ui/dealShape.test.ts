import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import { formShapeProblem } from '../../src/ui/state/dealShape.ts';

describe('deal form shape guard', () => {
  it('accepts every deal template', () => {
    for (const f of readdirSync('samples/deals').filter((x) => x.endsWith('.json')))
      expect(formShapeProblem(JSON.parse(readFileSync(`samples/deals/${f}`, 'utf8'))), f).toBeNull();
  });
  it('names the first part the form cannot draw', () => {
    expect(formShapeProblem(42)).toMatch(/not a JSON object/);
    expect(formShapeProblem({ events: 'x' })).toMatch(/"events" must be a list/);
    expect(formShapeProblem({ underlyings: { A: { kind: 'bond' } } })).toMatch(/underlying "A"/);
    expect(formShapeProblem({ schedules: { s: { dates: '2027-01-01' } } })).toMatch(/schedule "s"/);
    expect(formShapeProblem({ events: [{ on: 's', pay: { amount: 3 } }] })).toMatch(/event 1: every payment/);
    expect(formShapeProblem({ events: [{ on: 's', set: { x: 1 } }] })).toMatch(/event 1: "set"/);
  });
  it('an incomplete but well-shaped deal is the engine’s to judge, not the form’s', () => {
    expect(formShapeProblem({ name: 'draft' })).toBeNull();
  });
});
