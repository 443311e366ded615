/**
 * `factor-triage verify STUDY [--workers W] [--json]`: checks the study file's hash (edits after saving) and re-runs
 * it from its own inputs and seed; bit-identical (exit 0) or the first difference (exit 1).
 */
import type { CliIo } from '../main.ts';
import { EXIT } from '../main.ts';
import { EngineError } from '../../engine/errors.ts';
import { parseStudyFile, verifyStudy } from '../../engine/study/index.ts';
import { makeNodeWorkerExecutor } from '../../engine/simulation/runner.node.ts';
import { studyInProcessExecutor } from '../../engine/study/studyExecutor.ts';
import { CAUTION } from '../../report/index.ts';
import { readJsonFile } from './study.ts';

export const summary =
  'Re-run a saved study and check it is bit-identical (and was not edited after saving).';
export const usage = [
  'usage: factor-triage verify STUDY_FILE [--workers W] [--json]',
  '',
  '  --workers W   worker threads for the re-run (default 1); the result must not depend on W',
  '  --json        print the verification result as JSON',
  '',
  'exit codes: 0 identical, 1 edited or different (first difference named), 2 bad input, 3 internal error',
].join('\n');

export async function run(args: string[], io: CliIo): Promise<number> {
  let workers = 1;
  let json = false;
  const files: string[] = [];
  for (let i = 0; i < args.length; i++) {
    const a = args[i]!;
    if (a === '--workers') {
      workers = Number(args[++i]);
      if (!Number.isSafeInteger(workers) || workers < 1)
        throw new EngineError('E_USAGE', `--workers needs a whole number >= 1 (got ${args[i] ?? 'nothing'})`);
    } else if (a === '--json') json = true;
    else if (a.startsWith('-'))
      throw new EngineError('E_USAGE', `unknown option ${a} (see factor-triage verify --help)`);
    else files.push(a);
  }
  if (files.length !== 1) {
    io.err('factor-triage verify: give exactly one study file (factor-triage verify --help)');
    return EXIT.badInput;
  }
  const saved = parseStudyFile(readJsonFile(files[0]!, 'study file'));
  const r = await verifyStudy(saved, {
    workers,
    makeExecutor: (w) => (w > 1 ? makeNodeWorkerExecutor(w) : studyInProcessExecutor()),
    onProgress: (p) => io.progress(p.fraction, `verify: ${p.stage}`),
  });
  if (json) io.out(JSON.stringify(r));
  else {
    io.out(`${r.ok ? 'verified' : r.edited ? 'EDITED' : 'DIFFERENT'}: ${files[0]}: ${r.message}`);
    if (r.ok) io.out(`re-run in ${r.seconds.toFixed(1)} s with ${workers} worker(s); hash ${r.hash.stored}`);
    io.out(CAUTION);
  }
  return r.ok ? EXIT.ok : EXIT.different;
}
