/**
 * The study's payoff factory (simulation runner interface): the deal layer's evaluators, with the deal's struck
 * levels held at today's market spot. The deal language reads `start(X)` from the path at t = 0; a spot-bump
 * scenario rescales the whole path (sticky moneyness), which would move the strike with the spot and give a deal
 * already struck a delta of zero. This factory restores the t = 0 level of each equity to the variant's spot before
 * evaluating, so the bump moves the underlying and not the contract terms (common practice for a struck deal).
 * Unbumped paths already start at the spot and are evaluated unchanged.
 */
import type { EvaluatorContext } from '../simulation/runSpec.ts';
import type { PathBatch, PathEvaluator } from '../simulation/types.ts';
import {
  createEvaluators as dealEvaluators,
  eventTimes as dealEventTimes,
} from '../deal/dealPayoffFactory.ts';

function heldAtSpot(batch: PathBatch, spots: Record<string, number>): PathBatch {
  const n = batch.nPaths;
  let changed: Record<string, Float64Array> | null = null;
  for (const [name, s0] of Object.entries(spots)) {
    const arr = batch.equity[name];
    if (!arr) continue;
    let same = true;
    for (let p = 0; p < n; p++)
      if (arr[p] !== s0) {
        same = false;
        break;
      }
    if (same) continue;
    changed ??= { ...batch.equity };
    const copy = arr.slice();
    copy.fill(s0, 0, n);
    changed[name] = copy;
  }
  if (!changed) return batch;
  return Object.create(batch, { equity: { value: changed, enumerable: true } }) as PathBatch;
}

/** The deal's evaluators, each reading struck levels at today's spot. */
export function createEvaluators(description: unknown, context: EvaluatorContext): PathEvaluator[] {
  const spots: Record<string, number> = {};
  for (const e of context.variant.equities) spots[e.name] = e.spot;
  return dealEvaluators(description, context).map((ev) => (b: PathBatch) => ev(heldAtSpot(b, spots)));
}

/** Every time the deal observes or pays. */
export function eventTimes(description: unknown): number[] {
  return dealEventTimes(description);
}

/** Absolute URL of this module, for `RunSpec.payoff.factory`. */
export function studyDealFactoryUrl(): string {
  return new URL('./studyDealFactory.ts', import.meta.url).href;
}
