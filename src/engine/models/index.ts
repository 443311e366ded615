/** Analytic pricing models: Black–Scholes family, Bachelier, Heston (COS, Lewis), Hull–White (closed forms and trinomial tree), BS–Hull–White, quanto. */
export * from './blackScholes.ts';
export * from './bachelier.ts';
export * from './heston.ts';
export * from './hestonCharFn.ts';
export * from './hestonCos.ts';
export * from './hestonLewis.ts';
export * from './hullWhite.ts';
export * from './bsHullWhite.ts';
export * from './quanto.ts';
export * from './hullWhiteTree.ts';
