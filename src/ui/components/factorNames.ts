/** Short names of the stochastic factors and of the market's correlation pairs, as the screens show them. */

const FACTOR_SHORT: Record<string, string> = {
  stochVol: 'Stochastic vol',
  domesticRate: 'Domestic rate',
  foreignRate: 'Foreign rate',
};

/** Short name of a factor id (e.g. `stochVol` → "Stochastic vol"); unknown ids are shown as they are. */
export function factorShortName(id: string): string {
  return FACTOR_SHORT[id] ?? id;
}

const DRIVER: Record<string, (name: string) => string> = {
  eq: (n) => `${n} spot`,
  var: (n) => `${n} variance`,
  rate: (n) => `${n} short rate`,
  fx: (n) => `${n} FX`,
};

/** One correlation driver (`eq:ALDR`, `var:ALDR`, `rate:DOM`, `fx:ASHDOM`) in words; others as they are. */
export function driverName(id: string): string {
  const k = id.indexOf(':');
  const f = k > 0 ? DRIVER[id.slice(0, k)] : undefined;
  return f ? f(id.slice(k + 1)) : id;
}

/** A correlation pair written `a|b` in words, e.g. "ALDR spot – DOM short rate". */
export function pairName(pair: string): string {
  return pair
    .split('|')
    .map((p) => driverName(p))
    .join(' – ');
}
