import { describe, it, expect, beforeAll } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync, existsSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { main, type CliIo } from '../../src/cli/main.ts';
import { parseStudyFile, checkStudyHash } from '../../src/engine/study/index.ts';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const DEAL = path.join(root, 'samples/deals/european-call.json');
const MARKET = path.join(root, 'samples/market/demo-market.json');
const FAST = [
  '--paths',
  '8192',
  '--first-paths',
  '4096',
  '--batch',
  '4096',
  '--no-greeks',
  '--no-sweeps',
  '--no-local-vol',
  '--also',
  'domesticRate',
];

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

describe('study, verify and diff commands', () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'ft-study-'));
  const studyFile = path.join(dir, 'call.study.json');
  const reportFile = path.join(dir, 'call.report.html');
  let studyOut: string[] = [];

  beforeAll(async () => {
    const io = capture();
    const code = await main(['study', DEAL, MARKET, ...FAST, '--out', studyFile, '--report', reportFile], io);
    studyOut = io.outLines;
    expect(code, io.errLines.join('\n')).toBe(0);
  });

  it('writes the study file and the report, says where they are, and carries the caution', () => {
    expect(existsSync(studyFile)).toBe(true);
    expect(existsSync(reportFile)).toBe(true);
    const text = studyOut.join('\n');
    expect(text).toContain(studyFile);
    expect(text).toContain(reportFile);
    expect(text).toMatch(/does not replace the firm's model validation/);
    // atomic write: no temporary file is left in the folder
    expect(readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
    const saved = parseStudyFile(JSON.parse(readFileSync(studyFile, 'utf8')));
    expect(checkStudyHash(saved).ok).toBe(true);
    // Each decided factor's budget is printed as its parts, and they add up to the budget column.
    let checked = 0;
    for (const v of saved.verdicts) {
      const b = saved.results.budgetParts?.[v.factor];
      if (!v.decision || !b) continue;
      checked++;
      expect(text).toMatch(/budget of .*: step halving .*, calibration .*, repricing /);
      const sum = b.stepHalving + b.calibration + (b.repricing ?? 0) + (b.exerciseGap ?? 0);
      expect(Math.abs(sum - v.decision.budget)).toBeLessThanOrEqual(1e-9 * Math.max(1, sum));
    }
    expect(checked).toBeGreaterThan(0);
  });

  it('verify re-runs the study bit-identically with one worker and with two', async () => {
    for (const w of ['1', '2']) {
      const io = capture();
      const code = await main(['verify', studyFile, '--workers', w], io);
      expect(code, `${w} worker(s): ${io.outLines.join('\n')} ${io.errLines.join('\n')}`).toBe(0);
      expect(io.outLines[0]).toMatch(/^verified/);
    }
  });

  it('verify fails a hand-edited study with a clear message and exit code 1', async () => {
    const edited = path.join(dir, 'edited.study.json');
    const s = JSON.parse(readFileSync(studyFile, 'utf8'));
    s.verdicts[1].verdict = s.verdicts[1].verdict === 'keep' ? 'drop' : 'keep';
    writeFileSync(edited, JSON.stringify(s));
    const io = capture();
    expect(await main(['verify', edited], io)).toBe(1);
    expect(io.outLines[0]).toMatch(/changed after it was saved/);
    const d = capture();
    expect(await main(['diff', studyFile, edited], d)).toBe(1);
    expect(d.outLines.join('\n')).toMatch(/verdicts: 1 change/);
    const same = capture();
    expect(await main(['diff', studyFile, studyFile], same)).toBe(0);
  });

  it('answers --help for each command', async () => {
    for (const c of ['study', 'verify', 'diff']) {
      const io = capture();
      expect(await main([c, '--help'], io)).toBe(0);
      expect(io.outLines.join('\n')).toMatch(new RegExp(`usage: factor-triage ${c}`));
    }
  });

  it('refuses bad input in one line with exit code 2', async () => {
    const bad = path.join(dir, 'bad.json');
    writeFileSync(bad, '{ not json');
    const deal = JSON.parse(readFileSync(DEAL, 'utf8'));
    deal.underlyings = { ZEPH: { kind: 'equity', currency: 'DOM' } };
    deal.events[0].pay.amount = 'max(perf(ZEPH) - strike, 0)';
    const unknown = path.join(dir, 'unknown.json');
    writeFileSync(unknown, JSON.stringify(deal));
    const cases: [string[], RegExp][] = [
      [['study', path.join(dir, 'missing.json'), MARKET], /no such file/],
      [['study', bad, MARKET], /not valid JSON/],
      [['study', unknown, MARKET, ...FAST], /deal\.underlyings\.ZEPH/],
      [['study', DEAL, MARKET, '--bp', '0'], /settings\.threshold\.value must be > 0/],
      [['study', DEAL], /give a deal file and at least one market file/],
      [['verify', bad], /not valid JSON/],
      [['verify', DEAL], /study\.format/],
    ];
    for (const [args, re] of cases) {
      const io = capture();
      const code = await main(args, io);
      expect(code, args.join(' ')).toBe(2);
      expect(io.errLines, args.join(' ')).toHaveLength(1);
      expect(io.errLines[0]).toMatch(re);
    }
  });
});
