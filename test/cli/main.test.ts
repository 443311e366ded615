import { describe, expect, it } from 'vitest';
import { main, type CliIo } from '../../src/cli/main.ts';

function capture(): CliIo & { outLines: string[]; errLines: string[] } {
  const outLines: string[] = [];
  const errLines: string[] = [];
  return {
    outLines,
    errLines,
    out: (l) => outLines.push(l),
    err: (l) => errLines.push(l),
    progress: () => {},
  };
}

describe('command line dispatcher', () => {
  it('rejects an unknown command in one line with exit code 2', async () => {
    const io = capture();
    expect(await main(['frobnicate'], io)).toBe(2);
    expect(io.errLines).toHaveLength(1);
    expect(io.errLines[0]).toMatch(/unknown command "frobnicate"/);
  });
  it('prints help with the caution about model validation', async () => {
    const io = capture();
    expect(await main(['--help'], io)).toBe(0);
    expect(io.outLines.join('\n')).toMatch(/independent validation/);
  });
});
