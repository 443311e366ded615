/**
 * A command-line `CliIo` that records instead of printing: every stdout line in `outLines`, every stderr line in
 * `errLines` and every progress fraction in `fractions`, so a test can read what a command said.
 */
import type { CliIo } from '../../src/cli/main.ts';

/** What {@link captureIo} records. */
export interface CapturedIo extends CliIo {
  outLines: string[];
  errLines: string[];
  /** Progress fractions in [0, 1], in the order reported. */
  fractions: number[];
}

/** A fresh recording `CliIo`. */
export function captureIo(): CapturedIo {
  const outLines: string[] = [];
  const errLines: string[] = [];
  const fractions: number[] = [];
  return {
    outLines,
    errLines,
    fractions,
    out: (l) => outLines.push(l),
    err: (l) => errLines.push(l),
    progress: (f) => fractions.push(f),
  };
}
