/**
 * Standard normal quantile for bulk Monte Carlo draws. The implementation lives in math/normal.ts as `normInvFast`
 * (Wichura's PPND16: M. J. Wichura, "Algorithm AS 241: The percentage points of the normal distribution", Applied
 * Statistics 37(3), 1988, 477–484, about 1e-16 relative accuracy, without the Halley refinement `normInv` adds).
 * Inputs are uniforms strictly inside (0, 1).
 */
export { normInvFast as inverseNormal } from '../math/normal.ts';
