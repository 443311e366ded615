export * from './normal.ts';
export * from './complex.ts';
export * from './quadrature.ts';
export * from './roots.ts';
export * from './linalg.ts';
export * from './search.ts';
export * from './detMath.ts';
