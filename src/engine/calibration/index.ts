/**
 * Calibration layer: one optimiser wrapper, one file per model, fit and stability reports. The ladder itself is
 * assembled in one place, the study's `calibrateLadder` (src/engine/study/ladderCalibration.ts).
 */
export * from './levenbergMarquardt.ts';
export * from './blackFormulas.ts';
export * from './cosPricer.ts';
export * from './hestonCharFn.ts';
export * from './h1hwCharFn.ts';
export * from './hullWhiteBondVol.ts';
export * from './volGrid.ts';
export * from './hestonCalibration.ts';
export * from './hullWhiteCalibration.ts';
export * from './blackScholesCalibration.ts';
export * from './hestonRefit.ts';
export * from './fullModelVanillas.ts';
export * from './sviSurface.ts';
export * from './localVolCalibration.ts';
export * from './fxCalibration.ts';
export * from './chooseCalibrationSet.ts';
export * from './calibrationStability.ts';
