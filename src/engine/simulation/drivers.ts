/**
 * Drivers and their order. A driver is one Brownian motion of the union of all variants: `eq:NAME` (equity),
 * `var:NAME` (its variance), `rate:CCY` (a Hull–White short rate), `fx:NAME` (an FX rate), ordered equities first,
 * then variances, then rates, then FX, each group in order of first appearance across the variants. Every variant
 * reads the same normals for a driver, so paths of different variants are paired (common random numbers).
 *
 * Slots: a driver takes one normal per step, except a Hull–White rate which takes three (its Brownian increment
 * and two independent normals that complete the exact joint Gaussian step of x and ∫x; see hullWhiteTerms.ts).
 */
import type { VariantSpec } from './types.ts';

export type DriverKind = 'eq' | 'var' | 'rate' | 'fx';

/** The normals layout shared by all variants of a run. */
export interface DriverLayout {
  /** Driver names in order. */
  readonly names: readonly string[];
  /** First slot of each driver. */
  readonly slot: readonly number[];
  /** Number of normals per step per path. */
  readonly width: number;
  /** Slot index of a driver by name. */
  slotOf(name: string): number;
}

const ORDER: DriverKind[] = ['eq', 'var', 'rate', 'fx'];

/** Active drivers of one variant, in the shared order. */
export function variantDriverNames(v: VariantSpec): string[] {
  const eq = v.equities.map((e) => `eq:${e.name}`);
  const vars = v.equities.filter((e) => e.dynamics.kind === 'heston').map((e) => `var:${e.name}`);
  const rates = Object.keys(v.rates)
    .filter((c) => v.rates[c]!.hw !== undefined)
    .map((c) => `rate:${c}`);
  const fx = v.fx.map((f) => `fx:${f.name}`);
  return [...eq, ...vars, ...rates, ...fx];
}

/** Slots a driver takes per step. */
export function driverWidth(name: string): number {
  return name.startsWith('rate:') ? 3 : 1;
}

/** The union layout of the variants' drivers. */
export function makeDriverLayout(variants: readonly VariantSpec[]): DriverLayout {
  const seen = new Set<string>();
  const byKind: Record<DriverKind, string[]> = { eq: [], var: [], rate: [], fx: [] };
  for (const v of variants)
    for (const n of variantDriverNames(v)) {
      if (seen.has(n)) continue;
      seen.add(n);
      byKind[n.slice(0, n.indexOf(':')) as DriverKind].push(n);
    }
  const names = ORDER.flatMap((k) => byKind[k]);
  const slot: number[] = [];
  let w = 0;
  for (const n of names) {
    slot.push(w);
    w += driverWidth(n);
  }
  const index = new Map(names.map((n, i) => [n, slot[i]!]));
  return {
    names,
    slot,
    width: w,
    slotOf: (name) => {
      const s = index.get(name);
      if (s === undefined) throw new Error(`driver ${name} is not in the layout`);
      return s;
    },
  };
}

/** Sorts a variant's driver names into the shared order (for its Cholesky factor). */
export function orderDrivers(names: readonly string[], layout: DriverLayout): string[] {
  return [...names].sort((x, y) => layout.names.indexOf(x) - layout.names.indexOf(y));
}
