export * from './normal.ts';
export * from './complex.ts';
