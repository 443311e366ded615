import { describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { captureIo } from '../helpers/captureIo.ts';

describe('command line dispatcher', () => {
  it('rejects an unknown command in one line with exit code 2', async () => {
    const io = captureIo();
    expect(await main(['frobnicate'], io)).toBe(2);
    expect(io.errLines).toHaveLength(1);
    expect(io.errLines[0]).toMatch(/unknown command "frobnicate"/);
  });
  it('prints help with the caution about model validation', async () => {
    const io = captureIo();
    expect(await main(['--help'], io)).toBe(0);
    expect(io.outLines.join('\n')).toMatch(/independent validation/);
  });
});
