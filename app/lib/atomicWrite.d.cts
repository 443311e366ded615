/** Types of atomicWrite.cjs. */
import type * as fsModule from 'node:fs';
export declare function writeFileAtomic(
  target: string,
  text: string | Uint8Array,
  deps?: { fs?: typeof fsModule; pid?: number },
): void;
