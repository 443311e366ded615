/**
 * End-to-end tests of the browser build in Debian's Chromium: the built renderer (vite build) is served by
 * vite preview on 127.0.0.1 and driven with playwright-core. Screenshots of each screen go to docs/screens.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { build, preview, type PreviewServer } from 'vite';
import { chromium, type Browser } from 'playwright-core';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { AppPage, CHROMIUM_ARGS, CHROMIUM_PATH, mathMismatch } from './appPage.ts';
import { spawnSync } from 'node:child_process';
import { parseStudyFile } from '../../src/engine/study/index.ts';
import type { DealInput } from '../../src/engine/deal/types.ts';

const root = path.resolve(__dirname, '../..');
const shots = path.join(root, 'docs', 'screens');
const work = fs.mkdtempSync(path.join(os.tmpdir(), 'ft-e2e-'));
let server: PreviewServer;
let browser: Browser;
let url = '';
/** A study run and saved in the browser (by the re-run test), for the command-line check. */
let browserMade = '';

const readJson = <T>(p: string): T => JSON.parse(fs.readFileSync(path.join(root, p), 'utf8')) as T;

/** Runs the command line (`factor-triage ARGS`) in Node; returns its exit code and output. */
function cli(...args: string[]): { status: number | null; out: string } {
  const r = spawnSync(process.execPath, [path.join(root, 'bin', 'factor-triage.mjs'), ...args], {
    cwd: root,
    encoding: 'utf8',
    timeout: 120_000,
  });
  return { status: r.status, out: `${r.stdout}\n${r.stderr}` };
}

const cliMadeA = path.join(work, 'cli-made.study.json');
const cliMadeB = path.join(work, 'cli-made-wider.study.json');
const SMALL = [
  '--paths',
  '2048',
  '--first-paths',
  '512',
  '--batch',
  '512',
  '--no-greeks',
  '--no-sweeps',
  '--no-local-vol',
];

beforeAll(async () => {
  if (!fs.existsSync(CHROMIUM_PATH))
    throw new Error(
      `Chromium is not installed at ${CHROMIUM_PATH}: install it (apt-get install -y chromium, as CI does); the browser tests cannot run without it.`,
    );
  // The production renderer, as users get it (the test runner sets NODE_ENV=test, which would build React's development mode).
  const nodeEnv = process.env.NODE_ENV;
  process.env.NODE_ENV = 'production';
  try {
    await build({ configFile: path.join(root, 'vite.config.ts'), logLevel: 'warn', mode: 'production' });
  } finally {
    process.env.NODE_ENV = nodeEnv;
  }
  server = await preview({
    configFile: path.join(root, 'vite.config.ts'),
    preview: { host: '127.0.0.1', port: 0, strictPort: false },
  });
  url = server.resolvedUrls?.local[0] ?? '';
  if (!url) throw new Error('vite preview did not report a local URL');
  browser = await chromium.launch({ executablePath: CHROMIUM_PATH, args: CHROMIUM_ARGS });
}, 180_000);

afterAll(async () => {
  await browser?.close();
  await new Promise<void>((r) => (server ? server.httpServer.close(() => r()) : r()));
  fs.rmSync(work, { recursive: true, force: true });
});

describe('browser build', () => {
  it('the built page carries the strict content security policy', () => {
    const html = fs.readFileSync(path.join(root, 'dist', 'web', 'index.html'), 'utf8');
    const csp = html.match(/http-equiv="Content-Security-Policy" content="([^"]+)"/)?.[1] ?? '';
    expect(csp).toMatch(/default-src 'none'/);
    expect(csp).toMatch(/script-src 'self'(;|$)/);
    expect(csp).not.toMatch(/unsafe-inline|unsafe-eval|https?:/);
  });

  it('first start opens the bundled demo study and shows a verdict per factor, with the caution', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.page.waitForSelector('[data-testid=study-results]', { timeout: 30_000 });
      const verdicts = await app.page.$$('[data-testid^=verdict-]');
      expect(verdicts.length).toBeGreaterThanOrEqual(1);
      for (const v of verdicts) expect(await v.$('[data-verdict]')).not.toBeNull();
      expect(await app.page.textContent('[data-testid=caution]')).toMatch(
        /not investment advice.*does not replace model validation/,
      );
      await app.shot(shots, 'triage');
      await app.screen('fit');
      await app.page.waitForSelector('.variant-list');
      // The richest variant opens: a smile per expiry for the equity, the rate vols on their own chart.
      await app.page.waitForSelector('[data-testid=smile-ALDR]');
      expect(await app.page.textContent('[data-testid=ratevols-DOM]')).toMatch(/normal vol \(bp\)/);
      expect(
        await app.page.$$eval('[data-testid=fit-residuals] .group-head', (r) => r.length),
      ).toBeGreaterThan(2);
      expect(await app.page.textContent('[data-testid=fit-residuals]')).toMatch(/not repriced \(see note\)/);
      await app.shot(shots, 'fit');
      // Legend buttons bring one expiry forward from the keyboard.
      await app.page.focus('[data-testid=smile-ALDR] figcaption button');
      await app.page.keyboard.press('Enter');
      expect(await app.page.getAttribute('[data-testid=smile-ALDR] figcaption button', 'aria-pressed')).toBe(
        'true',
      );
      // A variant with the rates on the curve says so instead of drawing an empty rate chart.
      await app.page.click('.variant-list li:nth-child(2) button');
      expect(await app.page.textContent('[data-testid=no-rate-vols]')).toMatch(/no cap or swaption vols/);
      // The demo study carries three snapshots: verdicts and parameters per date, side by side.
      expect(await app.page.textContent('[data-testid=study-stability]')).toMatch(
        /Verdicts per date.*(holds|changes)/s,
      );
      await app.shot(shots, 'fit-dates', '[data-testid=study-stability]');
      // Stability across the market dates, recalibrated in the worker.
      await app.page.click('[data-testid=run-stability]');
      await app.page.waitForSelector('[data-testid=stability-report]', { timeout: 60_000 });
      expect(await app.page.textContent('[data-testid=stability-report]')).toMatch(/heston:ALDR/);
      await app.shot(shots, 'fit-stability', '[data-testid=stability-report]');
      expect(app.errors).toEqual([]);
    } finally {
      await app.close();
    }
  });

  it('a payoff edited into an error shows the error under the offending characters; fixing it clears it', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.pickTemplate('european-call');
      const field = 'deal.events[0].pay.amount';
      const original = await app.page.inputValue(`[data-path="${field}"]`);
      await app.fill(field, original + ' + FOO');
      const markSel = `.expr:has([data-path="${field}"]) .expr-echo mark`;
      await app.page.waitForSelector(markSel, { timeout: 10_000 });
      expect(await app.page.textContent(markSel)).toBe('FOO');
      expect(await app.page.textContent(`.expr:has([data-path="${field}"]) .field-msg`)).toMatch(
        /unknown name FOO/,
      );
      expect(await app.page.textContent('[data-testid=deal-status]')).toMatch(/1 problem/);
      await app.shot(shots, 'deal-error', `[data-path="${field}"]`);
      await app.fill(field, original);
      await app.page.waitForFunction(() =>
        document.querySelector('[data-testid=deal-status]')?.textContent?.includes('No problems'),
      );
      expect(await app.page.$(markSel)).toBeNull();
      await app.shot(shots, 'deal');
      // The deal as text: text that is not JSON stays with the reason; a deal of the wrong shape keeps the form away.
      await app.page.click('details.source summary');
      const src = '[data-path="deal.$source"]';
      const good = await app.page.inputValue(src);
      await app.page.fill(src, good.slice(0, -3));
      expect(await app.page.textContent('details.source [role=alert]')).toMatch(/not valid JSON yet/);
      expect(await app.page.inputValue(src)).toBe(good.slice(0, -3));
      await app.page.fill(src, JSON.stringify({ ...JSON.parse(good), events: 'not a list' }));
      await app.page.waitForSelector('[data-testid=deal-shape]');
      await app.page.fill(src, good);
      await app.page.waitForFunction(() =>
        document.querySelector('[data-testid=deal-status]')?.textContent?.includes('No problems'),
      );
      expect(await app.page.$('[data-testid=deal-shape]')).toBeNull();
    } finally {
      await app.close();
    }
  });

  it('a deal under way shows its past fixings, what the past paid, and names a removed fixing as missing', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.pickTemplate('autocallable-memory-seasoned');
      await app.page.waitForSelector('[data-testid=past-payments] li');
      // The sample's past (samples/deals/README.md): three coupons paid, the fourth missed and remembered.
      expect(await app.page.$$eval('[data-testid=past-payments] li', (l) => l.length)).toBe(3);
      expect(await app.page.textContent('[data-testid=past-state]')).toMatch(/missed = 1/);
      await app.page.locator('[data-testid=past-fixings]').scrollIntoViewIfNeeded();
      await app.shot(shots, 'deal-history', '[data-testid=past-fixings]');
      const field = 'deal.history.fixings.ALDR["2026-05-10"]';
      await app.page.click(`[aria-label='Remove ${field}']`);
      // The engine re-checks the deal in its worker: wait for the panel to report the gap.
      await app.page.waitForSelector('[data-testid=past-fixings-status].msg-error', { timeout: 10_000 });
      expect(await app.page.textContent('[data-testid=deal-status]')).toMatch(/1 problem/);
      expect(await app.page.textContent(`[data-past-field='${field}']`)).toMatch(/give the level observed/);
    } finally {
      await app.close();
    }
  });

  it('a schedule rolls off non-business days of a holiday list typed as text; a bad holiday is named at the list and the text stays', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.pickTemplate('autocallable-memory');
      const roll = 'deal.schedules.quarterly.roll';
      await app.page.selectOption(`[data-path="${roll}"]`, 'modifiedFollowing');
      await app.page.waitForFunction(() =>
        document.querySelector('[data-testid=deal-calendar]')?.textContent?.includes('This deal uses it'),
      );
      const list = '[data-path="deal.calendar.holidays"]';
      const typed = 'date,name\n2026-12-25,Winter break\n2027-02-30,Founders day';
      await app.page.fill(list, typed);
      await app.page.waitForSelector('[data-testid=calendar-problems]', { timeout: 10_000 });
      expect(await app.page.textContent('[data-testid=calendar-problems]')).toMatch(
        /Holiday 2 \(line 3\): .*write it YYYY-MM-DD/,
      );
      expect(await app.page.inputValue(list)).toBe(typed);
      expect(await app.page.textContent('[data-testid=deal-status]')).toMatch(/1 problem/);
      await app.shot(shots, 'deal-calendar', '[data-testid=deal-calendar]');
      await app.page.fill(list, typed.replace('2027-02-30', '2027-02-23'));
      await app.page.waitForFunction(() =>
        document.querySelector('[data-testid=deal-status]')?.textContent?.includes('No problems'),
      );
      expect(await app.page.$('[data-testid=calendar-problems]')).toBeNull();
      // The schedule shows which of its dates move: the holiday on a coupon date goes to the next business day.
      expect(await app.page.textContent('[data-testid=rolled-quarterly]')).toMatch(
        /2027-02-23 → 2027-02-2[4-6]/,
      );
      // The roll survives editing the schedule's other fields.
      await app.fill('deal.schedules.quarterly.every', '6M');
      expect(await app.page.inputValue(`[data-path="${roll}"]`)).toBe('modifiedFollowing');
    } finally {
      await app.close();
    }
  });

  it('Print / save as PDF opens the whole report ready to print with the caution, calls print, and Escape returns', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.page.evaluate(() => {
        const w = window as unknown as { __prints: number };
        w.__prints = 0;
        window.print = () => void (w.__prints += 1);
      });
      await app.page.waitForSelector('[data-testid=study-results]', { timeout: 30_000 });
      await app.screen('review');
      const refused: string[] = [];
      app.page.on('console', (m) => {
        if (m.type() === 'error' && /Content Security Policy/.test(m.text())) refused.push(m.text());
      });
      await app.page.click('[data-testid=print-report]');
      await app.page.waitForSelector('[data-testid=print-view]', { timeout: 20_000 });
      await app.page.waitForFunction(() => (window as unknown as { __prints: number }).__prints === 1);
      // Keyboard: focus starts on the way back and Tab stays within the view (the app behind is inert).
      expect(await app.page.evaluate(() => document.activeElement?.getAttribute('data-testid'))).toBe(
        'print-close',
      );
      await app.page.keyboard.press('Tab');
      await app.page.keyboard.press('Tab');
      expect(
        await app.page.evaluate(() => !!document.activeElement?.closest('.frame')),
        'focus must not reach the app behind the print view',
      ).toBe(false);
      expect(await app.page.textContent('[data-testid=print-caution]')).toMatch(/not investment advice/);
      const report = await app.page.$eval('[data-testid=print-report-body]', (el) => ({
        text: el.shadowRoot?.textContent ?? '',
        sections: el.shadowRoot?.querySelectorAll('h2').length ?? 0,
        styled: el.shadowRoot ? getComputedStyle(el.shadowRoot.querySelector('main')!).maxWidth : '',
      }));
      expect(report.text).toMatch(/not investment advice/);
      expect(report.text).toMatch(/Limitations/);
      expect(report.sections).toBeGreaterThan(5);
      expect(report.styled, 'the report keeps its own styles under the page policy').toBe('980px');
      expect(refused, 'nothing of the report is refused by the page policy').toEqual([]);
      // On paper only the report: the app frame is hidden by the print style sheet.
      await app.page.emulateMedia({ media: 'print' });
      expect(await app.page.$eval('.frame', (el) => getComputedStyle(el).display)).toBe('none');
      await app.page.emulateMedia({ media: null });
      // Printed, the report runs over as many pages as it needs (the app's fixed frame must not cut it to one).
      const pdf = (await app.page.pdf({ format: 'A4', printBackground: true })).toString('latin1');
      const pages = (pdf.match(/\/Type\s*\/Page[^s]/g) ?? []).length;
      expect(pages, 'pages of the printed report').toBeGreaterThan(3);
      await app.shot(shots, 'print-view');
      await app.page.keyboard.press('Escape');
      await app.page.waitForSelector('[data-testid=print-view]', { state: 'detached' });
      expect(await app.page.getAttribute('.frame', 'inert')).toBeNull();
      expect(await app.page.isVisible('[data-testid=print-report-body]')).toBe(false);
      expect(app.errors).toEqual([]);
    } finally {
      await app.close();
    }
  });

  it('a bad number keeps the typed text with a message beside the field, also after a reload', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.page.waitForSelector('[data-screen=triage]');
      await app.fill('settings.paths', '12k');
      const msg = '.field:has([data-path="settings.paths"]) .field-msg';
      expect(await app.page.textContent(msg)).toMatch(/"12k" is not a number/);
      await app.page.waitForTimeout(700); // autosave
      await app.page.reload();
      await app.page.waitForSelector('[data-path="settings.paths"]');
      expect(await app.page.inputValue('[data-path="settings.paths"]')).toBe('12k');
      expect(await app.page.textContent(msg)).toMatch(/not a number/);
      // Alt+2 goes to the Deal screen; leaving the page with unsaved changes asks first.
      await app.page.keyboard.press('Alt+2');
      await app.page.waitForSelector('[data-testid=deal-status]');
      await app.page.fill('[data-path="deal.name"]', 'Renamed deal');
      await app.page.close({ runBeforeUnload: true });
      await new Promise((r) => setTimeout(r, 500));
      expect(app.dialogs).toContain('beforeunload');
    } finally {
      await app.close();
    }
  });

  it('a correlation matrix that is not PSD is flagged, and the nearest valid matrix is applied only on request', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.screen('market');
      // The demo study opens asynchronously: wait for the market itself, not the "opening" notice.
      await app.page.waitForSelector('[data-tab=equities]');
      await app.shot(shots, 'market');
      await app.page.click('[data-tab=equities]');
      await app.page.waitForSelector('.grid-table');
      await app.shot(shots, 'smile');
      await app.page.click('[data-tab=correlation]');
      await app.page.waitForFunction(() =>
        document.querySelector('[data-testid=psd-status]')?.textContent?.includes('Positive semi-definite'),
      );
      await app.fill('correlation.matrix[0][1]', '0.95');
      await app.fill('correlation.matrix[0][2]', '0.95');
      await app.fill('correlation.matrix[1][2]', '-0.95');
      await app.page.waitForSelector('[data-testid=nearest-offer]', { timeout: 10_000 });
      expect(await app.page.textContent('[data-testid=psd-status]')).toMatch(/Not positive semi-definite/);
      expect(await app.page.inputValue('[data-path="correlation.matrix[1][2]"]')).toBe('-0.95');
      await app.shot(shots, 'correlation');
      await app.page.click('[data-testid=use-nearest]');
      await app.page.waitForFunction(() =>
        document.querySelector('[data-testid=psd-status]')?.textContent?.includes('Positive semi-definite'),
      );
    } finally {
      await app.close();
    }
  });

  it('changing the threshold and re-running updates the verdicts with no main-thread task over 200 ms; the saved study opens again and re-runs bit for bit in the browser', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.page.waitForSelector('[data-screen=triage]');
      await app.pickTemplate('autocallable-memory');
      await app.smallRun(2048, 512, 512, true);
      await app.fill('settings.threshold.value', '25');
      const t0 = await app.now();
      await app.page.click('[data-testid=run-study]');
      await app.page.waitForSelector('[data-testid=run-progress]', { timeout: 10_000 });
      await app.page.waitForFunction(() => !document.querySelector('[data-testid=run-progress]'), undefined, {
        timeout: 120_000,
      });
      expect(await app.page.$('[data-testid=run-error]')).toBeNull();
      const tau = 25e-4 * readJson<DealInput>('samples/deals/autocallable-memory.json').notional;
      expect(await app.page.textContent('[data-testid=answer] + p')).toContain(`τ = ${tau} DOM`);
      expect(await app.page.textContent('[data-testid=doc-title]')).toMatch(/unsaved/);
      const long = await app.longTasksSince(t0);
      const worst = Math.max(0, ...long.map((x) => x.duration));
      const gaps = await app.rafGapsSince(t0);
      console.info(
        `run in the browser: longest main-thread task ${worst} ms (${long.length} over 50 ms); longest frame gap ${Math.round(Math.max(0, ...gaps.map((g) => g.duration)))} ms`,
      );
      expect(worst, `main-thread long tasks during the run: ${JSON.stringify(long)}`).toBeLessThan(200);
      // The monitor itself works: a deliberate 250 ms block on the main thread is seen.
      const t1 = await app.now();
      await app.page.evaluate(() => {
        // A task of the page's own event loop (work evaluated from outside is not attributed to the page).
        setTimeout(() => {
          const end = performance.now() + 250;
          while (performance.now() < end) {
            /* block the main thread */
          }
        }, 0);
      });
      await app.page.waitForTimeout(600);
      const seen = Math.max(0, ...(await app.longTasksSince(t1)).map((x) => x.duration));
      expect(seen, 'the long-task monitor must see a deliberate 250 ms block').toBeGreaterThanOrEqual(200);
      const saved = await app.download('.top-actions button:text-is("Save")', work);
      const study = parseStudyFile(JSON.parse(fs.readFileSync(saved, 'utf8')));
      expect(study.input.settings.threshold).toEqual({ kind: 'bp', value: 25 });
      // It opens again in the browser and re-runs bit for bit there…
      await app.upload('.top-actions button:text-is("Open…")', saved);
      await app.page.waitForFunction(
        (n) => document.querySelector('[data-testid=doc-title]')?.textContent?.startsWith(n),
        path.basename(saved),
      );
      expect(await app.page.textContent('[data-testid=doc-title]')).not.toMatch(/unsaved/);
      await app.screen('review');
      await app.page.click('[data-testid=verify]');
      await app.page.waitForSelector('[data-testid=verify-result]', { timeout: 120_000 });
      expect(await app.page.textContent('[data-testid=verify-result]')).toMatch(/Reproduced bit for bit/);
      browserMade = saved;
    } finally {
      await app.close();
    }
  });

  it('a study saved from the browser verifies bit for bit from the command line', async () => {
    expect(browserMade, 'the previous test saves the browser-made study').not.toBe('');
    const v = cli('verify', browserMade);
    if (v.status !== 0) {
      const app = await AppPage.open(browser, url);
      const rates = await mathMismatch(app.page);
      await app.close();
      expect.fail(
        `factor-triage verify of the browser-made study:\n${v.out}\nshare of arguments where Chromium and this Node differ, per function: ${JSON.stringify(rates)}`,
      );
    }
  });

  it('a run can be cancelled and the previous results stay', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.page.waitForSelector('[data-testid=study-results]', { timeout: 30_000 });
      const before = await app.page.textContent('[data-testid=answer]');
      await app.pickTemplate('autocallable-memory');
      await app.smallRun(262144, 4096, 4096, false);
      // Keyboard only: Ctrl+Enter runs, Escape cancels.
      await app.page.keyboard.press('Control+Enter');
      await app.page.waitForSelector('[data-testid=run-progress]');
      await app.page.keyboard.press('Escape');
      await app.page.waitForSelector('[data-testid=run-cancelled]', { timeout: 20_000 });
      expect(await app.page.textContent('[data-testid=answer]')).toBe(before);
      expect(await app.page.isEnabled('[data-testid=run-study]')).toBe(true);
    } finally {
      await app.close();
    }
  });

  it('two studies made by the command line open in the browser and can be compared', async () => {
    const deal = 'samples/deals/autocallable-memory.json';
    const market = 'samples/market/demo-market.json';
    const ra = cli(
      'study',
      deal,
      market,
      ...SMALL,
      '--out',
      cliMadeA,
      '--report',
      path.join(work, 'a.report.html'),
    );
    expect(ra.status, ra.out).toBe(0);
    const rb = cli(
      'study',
      deal,
      market,
      ...SMALL,
      '--bp',
      '40',
      '--out',
      cliMadeB,
      '--report',
      path.join(work, 'b.report.html'),
    );
    expect(rb.status, rb.out).toBe(0);
    const app = await AppPage.open(browser, url);
    try {
      await app.page.waitForSelector('[data-screen=review]');
      await app.screen('review');
      await app.upload('[data-testid=review-open]', cliMadeA);
      await app.page.waitForFunction(() =>
        document.querySelector('[data-testid=doc-title]')?.textContent?.startsWith('cli-made'),
      );
      await app.upload('[data-testid=diff-open]', cliMadeB);
      await app.page.waitForSelector('[data-testid=diff-settings]', { timeout: 10_000 });
      expect(await app.page.textContent('[data-testid=diff-settings]')).toMatch(/settings\.threshold\.value/);
      await app.shot(shots, 'diff', '[data-testid=diff-result]');
    } finally {
      await app.close();
    }
  });

  it('a study made by the command line verifies bit for bit in the browser', async () => {
    expect(fs.existsSync(cliMadeA), 'the previous test writes the command-line study').toBe(true);
    const app = await AppPage.open(browser, url);
    try {
      await app.page.waitForSelector('[data-screen=review]');
      await app.screen('review');
      await app.upload('[data-testid=review-open]', cliMadeA);
      await app.page.waitForFunction(() =>
        document.querySelector('[data-testid=doc-title]')?.textContent?.startsWith('cli-made'),
      );
      await app.page.click('[data-testid=verify]');
      await app.page.waitForSelector('[data-testid=verify-result]', { timeout: 120_000 });
      await app.shot(shots, 'review');
      const result = (await app.page.textContent('[data-testid=verify-result]')) ?? '';
      if (!/Reproduced bit for bit/.test(result))
        expect.fail(
          `${result}\nshare of arguments where Chromium and this Node differ, per function: ${JSON.stringify(await mathMismatch(app.page))}`,
        );
    } finally {
      await app.close();
    }
  });

  it('an edited or invalid study file is refused with the reason', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.page.waitForSelector('[data-screen=triage]');
      const bad = path.join(work, 'not-a-study.json');
      fs.writeFileSync(bad, JSON.stringify({ format: 'something-else' }));
      await app.upload('.top-actions button:text-is("Open…")', bad);
      const n = await app.page.waitForSelector('.notice-error');
      expect(await n.textContent()).toMatch(/not-a-study\.json was not opened: .*format/);
      expect(await app.page.textContent('[data-testid=doc-title]')).not.toMatch(/not-a-study/);
    } finally {
      await app.close();
    }
  });

  it('exports the report as one self-contained HTML file carrying the caution', async () => {
    const app = await AppPage.open(browser, url);
    try {
      await app.page.waitForSelector('[data-testid=study-results]', { timeout: 30_000 });
      // Hedge-ratio verdicts carry their budget: delta and rho from step halving, vega none.
      const greekRow = (g: string) => app.page.textContent(`[data-testid=greek-verdict-${g}-stochVol]`);
      expect(await greekRow('delta')).toMatch(/±/);
      expect(await greekRow('vega')).toMatch(/none.*not checked \(vega\)/);
      await app.screen('review');
      const file = await app.download('[data-testid=export-html]', work);
      const html = fs.readFileSync(file, 'utf8');
      expect(html.slice(0, 15).toLowerCase()).toBe('<!doctype html>');
      expect(html).toMatch(/not investment advice/);
      expect(html).not.toMatch(/(src|href)=["']https?:/);
    } finally {
      await app.close();
    }
  });
});
