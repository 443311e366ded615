export * from './batchSeed.ts';
export * from './inverseNormal.ts';
export * from './uniformStream.ts';
export * from './normalStream.ts';
