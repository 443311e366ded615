export * from './types.ts';
export * from './curve.ts';
export * from './dates.ts';
export * from './equity.ts';
export * from './volSurface.ts';
