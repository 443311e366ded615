/**
 * `factor-triage diff A B [--json]`: what changed between two saved studies — inputs (deal, markets), settings,
 * results and verdicts. Exit 0 when identical (timings aside), 1 when they differ.
 */
import type { CliIo } from '../main.ts';
import { EXIT } from '../main.ts';
import { EngineError } from '../../engine/errors.ts';
import { diffStudies, parseStudyFile, type FieldChange } from '../../engine/study/index.ts';
import { readJsonFile } from './study.ts';

export const summary = 'Compare two saved studies: inputs, settings, results and verdicts.';
export const usage = [
  'usage: factor-triage diff STUDY_A STUDY_B [--json] [--all]',
  '',
  '  --json   print the comparison as JSON',
  '  --all    list every changed field (default: the first 20 per section)',
  '',
  'exit codes: 0 identical, 1 different, 2 bad input, 3 internal error',
].join('\n');

function show(v: unknown): string {
  if (v === undefined) return '(absent)';
  const s = typeof v === 'number' ? String(v) : JSON.stringify(v);
  return s.length > 60 ? s.slice(0, 57) + '...' : s;
}

function section(io: CliIo, title: string, rows: FieldChange[], all: boolean): void {
  if (rows.length === 0) {
    io.out(`${title}: no change`);
    return;
  }
  io.out(`${title}: ${rows.length} change(s)`);
  for (const r of all ? rows : rows.slice(0, 20))
    io.out(
      `  ${r.field}: ${show(r.a)} → ${show(r.b)}${r.change !== undefined ? ` (${r.change >= 0 ? '+' : ''}${r.change.toPrecision(4)})` : ''}`,
    );
  if (!all && rows.length > 20) io.out(`  … ${rows.length - 20} more (use --all)`);
}

export async function run(args: string[], io: CliIo): Promise<number> {
  let json = false;
  let all = false;
  const files: string[] = [];
  for (const a of args) {
    if (a === '--json') json = true;
    else if (a === '--all') all = true;
    else if (a.startsWith('-'))
      throw new EngineError('E_USAGE', `unknown option ${a} (see factor-triage diff --help)`);
    else files.push(a);
  }
  if (files.length !== 2) {
    io.err('factor-triage diff: give two study files (factor-triage diff --help)');
    return EXIT.badInput;
  }
  const a = parseStudyFile(readJsonFile(files[0]!, 'study file'));
  const b = parseStudyFile(readJsonFile(files[1]!, 'study file'));
  const d = diffStudies(a, b);
  if (json) io.out(JSON.stringify(d));
  else {
    io.out(
      d.identical ? 'identical inputs, settings and results (timings aside)' : `${files[0]} → ${files[1]}`,
    );
    if (!d.identical) {
      section(io, 'deal', d.deal, all);
      section(io, 'markets', d.markets, all);
      section(io, 'settings', d.settings, all);
      if (d.verdicts.length) {
        io.out(`verdicts: ${d.verdicts.length} change(s)`);
        for (const v of d.verdicts) io.out(`  ${v.factor}: ${v.a} → ${v.b}`);
      } else io.out('verdicts: no change');
      section(io, 'results', d.results, all);
      if (d.truncated) io.out('(a section had more than 200 changes; the list is cut)');
    }
  }
  return d.identical ? EXIT.ok : EXIT.different;
}
