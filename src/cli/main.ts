/**
 * `factor-triage` command line: dispatches to one module per command under `commands/`.
 * Exit codes (documented in README): 0 ok, 1 verification or comparison found a difference,
 * 2 bad usage or bad input, 3 internal error.
 */
import { toPlainError } from '../engine/errors.ts';

export const EXIT = { ok: 0, different: 1, badInput: 2, internal: 3 } as const;

/** A command module exports `run(args, io)` and a one-line `summary`, and prints its own `--help`. */
export interface CommandModule {
  summary: string;
  usage: string;
  run(args: string[], io: CliIo): Promise<number>;
}

export interface CliIo {
  out(line: string): void;
  err(line: string): void;
  /** Progress on stderr, redrawn in place when stderr is a terminal. */
  progress(fraction: number, label: string): void;
}

/** Command names; each lives in `commands/<name>.ts` (loaded on demand, so one command's weight does not slow another). */
const COMMANDS = ['quote', 'simulate', 'calibrate', 'study', 'verify', 'diff', 'deal'] as const;

function loadCommand(name: string): Promise<CommandModule> {
  const spec = `./commands/${name}.ts`;
  return import(spec) as Promise<CommandModule>;
}

export function nodeIo(): CliIo {
  const tty = Boolean(process.stderr.isTTY);
  let last = -1;
  return {
    out: (l) => process.stdout.write(l + '\n'),
    err: (l) => process.stderr.write(l + '\n'),
    progress: (f, label) => {
      const pct = Math.floor(Math.max(0, Math.min(1, f)) * 100);
      if (!tty) {
        if (pct >= last + 25 || pct === 100) {
          process.stderr.write(`${label} ${pct}%\n`);
          last = pct;
        }
        return;
      }
      const w = 30;
      const n = Math.round((pct / 100) * w);
      process.stderr.write(
        `\r${label} [${'#'.repeat(n)}${'.'.repeat(w - n)}] ${pct}%` + (pct === 100 ? '\n' : ''),
      );
    },
  };
}

function helpText(): string {
  const names = COMMANDS.join(', ');
  return [
    'factor-triage: which stochastic factors does this payoff need?',
    '',
    'usage: factor-triage COMMAND [options]   (factor-triage COMMAND --help for one command)',
    `commands: ${names}`,
    '',
    'exit codes: 0 ok, 1 difference found (verify, diff), 2 bad usage or input, 3 internal error',
    'This tool informs pricing decisions; it is not investment advice. Model choice remains subject to',
    "your firm's model-risk policy and independent validation.",
  ].join('\n');
}

export async function main(argv: string[], io: CliIo = nodeIo()): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === '-h' || name === 'help') {
    io.out(helpText());
    return name ? EXIT.ok : EXIT.badInput;
  }
  if (!(COMMANDS as readonly string[]).includes(name)) {
    io.err(`factor-triage: unknown command "${name}"; commands: ${COMMANDS.join(', ')}`);
    return EXIT.badInput;
  }
  let mod: CommandModule;
  try {
    mod = await loadCommand(name);
  } catch (e) {
    io.err(`factor-triage ${name}: this command is not available in this build (${(e as Error).message})`);
    return EXIT.internal;
  }
  if (rest.includes('--help') || rest.includes('-h')) {
    io.out(`${mod.usage}\n\n${mod.summary}`);
    return EXIT.ok;
  }
  try {
    return await mod.run(rest, io);
  } catch (e) {
    const p = toPlainError(e);
    io.err(`factor-triage ${name}: ${p.message}`);
    return p.code === 'E_INTERNAL' ? EXIT.internal : EXIT.badInput;
  }
}
