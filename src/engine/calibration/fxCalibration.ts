/**
 * FX in every ladder variant is lognormal with the quoted ATM vol (Garman & Kohlhagen 1983); the quanto correlation
 * ρ(S, X) is an input, not calibrated (no liquid instrument quotes it), reported with its plausible range from the
 * snapshot's `correlationRanges` (common practice: quanto correlation is a reserve/sweep parameter).
 */
import type { MarketSnapshot } from '../market/types.ts';
import type { FxSpec } from '../simulation/types.ts';
import { fail } from '../errors.ts';

export interface FxCalibration {
  spec: FxSpec;
  /** Quanto correlations of the named equities with this FX rate: value used and plausible range. */
  quanto: Record<string, { rho: number; range: [number, number] | null }>;
}

/** Reads the correlation of two drivers from the snapshot (0 when absent), with an optional override map `A|B`. */
export function snapshotCorrelation(
  snapshot: MarketSnapshot,
  a: string,
  b: string,
  override?: Record<string, number>,
): number {
  const o = override?.[`${a}|${b}`] ?? override?.[`${b}|${a}`];
  if (o !== undefined) return o;
  const i = snapshot.correlation.names.indexOf(a);
  const j = snapshot.correlation.names.indexOf(b);
  return i >= 0 && j >= 0 ? (snapshot.correlation.matrix[i]?.[j] ?? 0) : 0;
}

/** Plausible range of a correlation from `correlationRanges` (either key order), or null. */
export function correlationRange(snapshot: MarketSnapshot, a: string, b: string): [number, number] | null {
  const r = snapshot.correlationRanges ?? {};
  return r[`${a}|${b}`] ?? r[`${b}|${a}`] ?? null;
}

/** FX spec of the pair `name` and the quanto correlations of `equities` with it. */
export function calibrateFx(snapshot: MarketSnapshot, name: string, equities: string[] = []): FxCalibration {
  const q = snapshot.fx?.[name];
  if (!q)
    fail(
      'E_NO_FX',
      `fx.${name}`,
      'must be quoted in the snapshot',
      Object.keys(snapshot.fx ?? {}),
      `add fx.${name} with spot and vol`,
    );
  if (!(q.vol > 0)) fail('E_FX_VOL', `fx.${name}.vol`, 'must be > 0', q.vol);
  const quanto: FxCalibration['quanto'] = {};
  for (const e of equities)
    quanto[e] = {
      rho: snapshotCorrelation(snapshot, `eq:${e}`, `fx:${name}`),
      range: correlationRange(snapshot, `eq:${e}`, `fx:${name}`),
    };
  return { spec: { name, foreign: q.foreign, spot: q.spot, vol: q.vol }, quanto };
}
