export * from './types.ts';
export * from './curve.ts';
export * from './dates.ts';
export * from './equity.ts';
export * from './volSurface.ts';
export * from './rateVols.ts';
export * from './correlation.ts';
export * from './snapshot.ts';
