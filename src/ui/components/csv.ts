/** Reading small tables pasted or imported as CSV (comma, semicolon or tab separated; numbers only). */
import { parseNumber } from './format.ts';

export interface CsvTable {
  /** Header cells when the first row is not numeric, else null. */
  header: string[] | null;
  rows: number[][];
}

export class CsvError extends Error {}

/** Parses numeric CSV text. A non-numeric first row is taken as a header; any other non-number is an error naming its cell. */
export function parseCsv(text: string): CsvTable {
  const lines = text
    .split(/\r?\n/)
    .map((l) => l.trim())
    .filter((l) => l.length > 0 && !l.startsWith('#'));
  if (lines.length === 0) throw new CsvError('the text holds no rows');
  const sep = lines[0]!.includes('\t') ? '\t' : lines[0]!.includes(';') ? ';' : ',';
  const cells = lines.map((l) => l.split(sep).map((c) => c.trim().replace(/^"(.*)"$/, '$1')));
  let header: string[] | null = null;
  const first = cells[0]!;
  if (first.some((c) => c !== '' && parseNumber(c) === null)) {
    header = first;
    cells.shift();
  }
  const rows = cells.map((r, i) =>
    r.map((c, j) => {
      const v = parseNumber(c);
      if (v === null)
        throw new CsvError(`row ${i + 1 + (header ? 1 : 0)}, column ${j + 1}: "${c}" is not a number`);
      return v;
    }),
  );
  return { header, rows };
}
