import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { templateFingerprint, type TemplateFingerprint } from './templateFingerprint.ts';

const here = path.dirname(fileURLToPath(import.meta.url));
const dir = path.resolve(here, '../../../samples/deals');
// Reference: the fingerprints recorded from the compiler, analysis and evaluator before deals could start in the
// past (the commit named in the file); a regression reference of the project itself, not an outside oracle.
const recorded = JSON.parse(readFileSync(path.join(here, 'templateFingerprints.json'), 'utf8')) as {
  source: string;
  templates: Record<string, TemplateFingerprint>;
};

describe('deals that start on or after their valuation date are untouched by the history support', () => {
  it('the recorded set covers every template without a past date', () => {
    const files = readdirSync(dir).filter((f) => f.endsWith('.json') && !f.includes('-seasoned'));
    expect(files.sort()).toEqual(Object.keys(recorded.templates).sort());
  });
  it.each(Object.keys(recorded.templates))(
    '%s compiles to the same program, analysis and per-path values bit for bit',
    (f) => {
      const now = templateFingerprint(JSON.parse(readFileSync(path.join(dir, f), 'utf8')));
      expect(now, `${f}: recorded by ${recorded.source}`).toEqual(recorded.templates[f]);
    },
  );
});
