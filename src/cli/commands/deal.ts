/**
 * `factor-triage deal check FILE...` and `factor-triage deal price FILE MARKET [options]`.
 *
 * check: validates a deal file (shape, names, dates, every payoff expression) and prints the analysis the study's
 * rules read, or every problem with its field and character position (a caret under the expression).
 * price: calibrates the base model the rules require to a market snapshot (the ladder's variant without candidate
 * factors, or every ladder variant with --ladder) and prices the deal by Monte Carlo, printing value ± standard error.
 */
import { readFile } from 'node:fs/promises';
import type { CliIo } from '../main.ts';
import { EXIT } from '../main.ts';
import { checkDeal } from '../../engine/deal/compileDeal.ts';
import type { CompiledHistory } from '../../engine/deal/types.ts';
import { analyseDeal } from '../../engine/deal/analyseDeal.ts';
import { dealPayoffFactoryUrl, eventTimes } from '../../engine/deal/dealPayoffFactory.ts';
import type { DealAnalysis } from '../../engine/deal/types.ts';
import { toPlainError } from '../../engine/errors.ts';

export const summary = 'Check a deal file and show what it depends on; price it on a market snapshot.';
export const usage = [
  'usage: factor-triage deal check FILE... [--json]',
  '       factor-triage deal price FILE MARKET... [--paths N] [--seed S] [--step YEARS] [--ladder] [--json]',
  '',
  '  check   validate deal files (format "factor-triage/deal@1") and print their analysis, or every problem',
  '          with its field path and character position',
  '  price   calibrate the model the rules require to each MARKET (format "factor-triage/market@1") and price by',
  '          Monte Carlo: --paths (default 32768), --seed (default 1), --step largest time step in years',
  '          (default 0.25), --ladder prices every variant of the factor ladder instead of the base one',
].join('\n');

const CAUTION =
  "This tool informs pricing decisions; it is not investment advice. Model choice remains subject to your firm's model-risk policy and independent validation.";

async function readJson(file: string, io: CliIo): Promise<unknown | undefined> {
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (e) {
    io.err(`${file}: cannot read the file (${(e as Error).message})`);
    return undefined;
  }
  try {
    return JSON.parse(text) as unknown;
  } catch (e) {
    io.err(`${file}: not valid JSON (${(e as Error).message}); fix the file and run again`);
    return undefined;
  }
}

/** Lines describing the analysis, for people. */
export function analysisLines(a: DealAnalysis): string[] {
  const yes = (b: boolean) => (b ? 'yes' : 'no ');
  const lines = [
    `deal: ${a.name}`,
    `  pays in ${a.currency}; currencies ${a.currencies.join(', ')}; last date ${a.lastTime.toFixed(3)}y; ${a.gridTimes.length} dates on the grid`,
    `  equities: ${a.equities.length > 0 ? a.equities.map((e) => `${e.id} (${e.currency})`).join(', ') : 'none'}`,
    `  FX: ${a.fx.length > 0 ? a.fx.map((f) => `${f.id} = ${f.units} per ${f.per}`).join(', ') : 'none'}`,
  ];
  const row = (label: string, f: { present: boolean; reason: string }) =>
    lines.push(`  ${label.padEnd(18)} ${yes(f.present)}  ${f.reason}`);
  row('rate dependent', a.rateDependent);
  for (const r of a.rates)
    lines.push(
      `    ${r.currency}: ${r.linearAtNaturalDate ? 'linear at natural dates' : r.nonLinear.present ? 'non-linear' : 'timing mismatch'}: ${r.reason}`,
    );
  row('FX on the path', a.fxDependent);
  row('cross-currency', a.crossCurrency);
  row('compo', a.compo);
  row('quanto', a.quanto);
  row('path dependent', a.pathDependent);
  row('early termination', a.earlyTermination);
  row('exercise rights', a.exercise);
  if (a.fundingSpread !== 0) lines.push(`  funding spread     ${(a.fundingSpread * 1e4).toFixed(0)} bp`);
  return lines;
}

/** The past of a deal under way, as the compiler resolved it: what was paid, what fired, the state carried on. */
function historyLines(h: CompiledHistory): string[] {
  const lines = [`  under way: valued on ${h.valuationDate}; the past was resolved from the deal's history`];
  if (h.payments.length === 0) lines.push('  past payments: none');
  else {
    lines.push('  past payments (already paid, not part of the value):');
    for (const p of h.payments)
      lines.push(
        `    ${p.date}  ${p.event}  ${p.amount.toPrecision(6)} per unit = ${p.cash.toFixed(2)} ${p.currency}`,
      );
  }
  const skipped = h.events.filter((e) => !e.fired);
  if (skipped.length)
    lines.push(`  past events that did not fire: ${skipped.map((e) => `${e.event} ${e.date}`).join(', ')}`);
  if (h.ignoredExercise.length)
    lines.push(
      `  past exercise dates (not taken, ignored): ${h.ignoredExercise.map((e) => `${e.label} ${e.date}`).join(', ')}`,
    );
  const st = Object.entries(h.state);
  if (st.length) lines.push(`  state after the past: ${st.map(([k, v]) => `${k} = ${v}`).join(', ')}`);
  return lines;
}

async function check(files: string[], json: boolean, io: CliIo): Promise<number> {
  if (files.length === 0) {
    io.err(usage);
    return EXIT.badInput;
  }
  let bad = false;
  const out: unknown[] = [];
  for (const file of files) {
    const raw = await readJson(file, io);
    if (raw === undefined) {
      bad = true;
      continue;
    }
    const r = checkDeal(raw);
    if (!r.compiled) {
      bad = true;
      if (json) out.push({ file, ok: false, issues: r.issues, expressionErrors: r.expressionErrors });
      else {
        io.err(`${file}: ${r.issues.filter((i) => i.severity === 'error').length} problem(s)`);
        const shown = new Set<string>();
        for (const e of r.expressionErrors) {
          shown.add(e.message);
          const text = r.issues.find((i) => i.field === e.field)?.value;
          io.err(`  ${e.message}`);
          if (typeof text === 'string') {
            io.err(`    ${text}`);
            io.err(
              `    ${' '.repeat(e.start)}${'^'.repeat(Math.max(1, Math.min(e.end, text.length) - e.start))}`,
            );
          }
        }
        for (const i of r.issues) if (!shown.has(i.message)) io.err(`  ${i.message}`);
      }
      continue;
    }
    const a = analyseDeal(r.compiled);
    const history = r.compiled.history;
    if (json) out.push({ file, ok: true, analysis: a, ...(history ? { history } : {}), warnings: r.issues });
    else {
      io.out(`${file}: ok`);
      for (const l of analysisLines(a)) io.out(l);
      if (history) for (const l of historyLines(history)) io.out(l);
    }
  }
  if (json) io.out(JSON.stringify(out, null, 2));
  else io.out(CAUTION);
  return bad ? EXIT.badInput : EXIT.ok;
}

function option(args: string[], name: string): string | undefined {
  const i = args.indexOf(name);
  return i >= 0 ? args[i + 1] : undefined;
}

async function price(args: string[], io: CliIo): Promise<number> {
  const positional = args.filter(
    (a, i) => !a.startsWith('--') && !(i > 0 && ['--paths', '--seed', '--step'].includes(args[i - 1]!)),
  );
  const [dealFile, ...marketFiles] = positional;
  if (!dealFile || marketFiles.length === 0) {
    io.err(usage);
    return EXIT.badInput;
  }
  const paths = Number(option(args, '--paths') ?? 32768);
  const step = Number(option(args, '--step') ?? 0.25);
  const seed = option(args, '--seed') ?? '1';
  if (!(Number.isSafeInteger(paths) && paths > 0)) {
    io.err(
      `--paths must be a whole number of paths > 0 (got ${option(args, '--paths')}), e.g. --paths 65536`,
    );
    return EXIT.badInput;
  }
  if (!(step > 0)) {
    io.err(`--step must be a number of years > 0 (got ${option(args, '--step')}), e.g. --step 0.25`);
    return EXIT.badInput;
  }
  const raw = await readJson(dealFile, io);
  if (raw === undefined) return EXIT.badInput;
  const r = checkDeal(raw);
  if (!r.compiled) {
    for (const i of r.issues) io.err(`${dealFile}: ${i.message}`);
    return EXIT.badInput;
  }
  const compiled = r.compiled;
  const analysis = analyseDeal(compiled);
  // The study layer decides which factors the rules require and calibrates the ladder; loaded on demand.
  const [{ parseSnapshot }, { applyRules, candidateFactors }, { calibrateLadder }, sim] = await Promise.all([
    import('../../engine/market/snapshot.ts'),
    import('../../engine/study/rules.ts'),
    import('../../engine/study/ladderCalibration.ts'),
    import('../../engine/simulation/index.ts'),
  ]);
  const rules = applyRules(analysis);
  const required = rules.factors.filter((f) => f.status === 'required').map((f) => f.factor);
  const candidates = args.includes('--ladder') ? candidateFactors(rules) : [];
  const json = args.includes('--json');
  if (!json) {
    for (const l of analysisLines(analysis)) io.out(l);
    io.out('');
    for (const f of rules.factors) io.out(`  ${f.factor.padEnd(14)} ${f.status.padEnd(10)} ${f.reason}`);
  }
  const results: unknown[] = [];
  let bad = false;
  for (const [m, marketFile] of marketFiles.entries()) {
    const rawMarket = await readJson(marketFile, io);
    if (rawMarket === undefined) {
      bad = true;
      continue;
    }
    let snapshot;
    try {
      snapshot = parseSnapshot(rawMarket).snapshot;
    } catch (e) {
      io.err(`${marketFile}: ${toPlainError(e).message}`);
      bad = true;
      continue;
    }
    const part = (f: number) => (m + f) / marketFiles.length;
    const dealDate = (raw as { valuationDate?: string }).valuationDate;
    const dateNote =
      dealDate !== undefined && dealDate !== snapshot.date
        ? `the deal's valuation date ${dealDate} differs from the market date ${snapshot.date}: deal times are measured from ${dealDate}`
        : null;
    io.progress(part(0), 'calibrating');
    const ladder = calibrateLadder({ snapshot, analysis, candidates, required, mode: 'fair', scheme: 'qe' });
    const variants = ladder.variants.filter((v) => v.role === 'ladder');
    const description = { deals: [compiled] };
    const res = await sim.runSimulation(
      {
        variants: variants.map((v) => v.spec),
        payoff: { factory: dealPayoffFactoryUrl(), description },
        grid: { eventTimes: eventTimes(description), maxStep: step },
        seed,
        maxPaths: paths,
      },
      sim.inProcessExecutor(),
      { onProgress: (p) => io.progress(part(0.3 + 0.7 * p.fraction), 'pricing') },
    );
    const stats = sim.resultStats(res);
    const rows = variants.map((v, i) => ({
      variant: v.id,
      label: v.label,
      value: stats.mean(i),
      se: stats.se(i),
    }));
    results.push({
      market: marketFile,
      date: snapshot.date,
      paths: res.paths,
      rows,
      warnings: ladder.warnings,
    });
    if (!json) {
      io.out('');
      io.out(
        `${marketFile} (${snapshot.date}): value in ${compiled.currency} (notional ${compiled.notional}), ${res.paths} paths, seed ${seed}:`,
      );
      for (const row of rows)
        io.out(`  ${row.label.padEnd(48)} ${row.value.toFixed(2).padStart(14)} ± ${row.se.toFixed(2)}`);
      for (const w of ladder.warnings) io.out(`  warning: ${w}`);
      if (dateNote) io.out(`  warning: ${dateNote}`);
    }
  }
  if (json) {
    io.out(
      JSON.stringify(
        {
          deal: compiled.name,
          currency: compiled.currency,
          seed,
          rules: rules.factors,
          results,
          caution: CAUTION,
        },
        null,
        2,
      ),
    );
  } else {
    if (compiled.exercise.length > 0)
      io.out('note: exercise rights are not in these values (they need the early-exercise pricer)');
    io.out(CAUTION);
  }
  return bad ? EXIT.badInput : EXIT.ok;
}

export async function run(args: string[], io: CliIo): Promise<number> {
  const [sub, ...rest] = args;
  try {
    if (sub === 'check')
      return await check(
        rest.filter((a) => a !== '--json'),
        rest.includes('--json'),
        io,
      );
    if (sub === 'price') return await price(rest, io);
  } catch (e) {
    io.err(`deal ${sub}: ${toPlainError(e).message}`);
    return toPlainError(e).code === 'E_INTERNAL' ? EXIT.internal : EXIT.badInput;
  }
  io.err(`deal: unknown subcommand ${JSON.stringify(sub ?? '')}; use check or price\n${usage}`);
  return EXIT.badInput;
}
