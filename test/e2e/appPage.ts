/**
 * Page object of the application for browser tests: screens, files (upload/download), runs, and a
 * long-task monitor installed before the app loads.
 */
import type { Browser, BrowserContext, Download, Page } from 'playwright-core';
import fs from 'node:fs';
import path from 'node:path';

export const CHROMIUM_PATH = '/usr/bin/chromium';
export const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

/** Records every main-thread task longer than 50 ms (PerformanceObserver 'longtask') and rAF gaps. */
const MONITOR = `
  window.__longTasks = [];
  window.__rafGaps = [];
  try {
    new PerformanceObserver((list) => {
      for (const e of list.getEntries()) window.__longTasks.push({ start: e.startTime, duration: e.duration });
    }).observe({ type: 'longtask', buffered: true });
  } catch (e) { window.__longTaskUnsupported = String(e); }
  let last = performance.now();
  const tick = (t) => { if (t - last > 50) window.__rafGaps.push({ start: last, duration: t - last }); last = t; requestAnimationFrame(tick); };
  requestAnimationFrame(tick);
`;

export class AppPage {
  readonly errors: string[] = [];
  /** Every URL the page requested that is not the app's own server (must stay empty: no remote content). */
  readonly foreign: string[] = [];
  /** Types of the dialogs the page opened (all accepted). */
  readonly dialogs: string[] = [];
  private constructor(
    readonly context: BrowserContext,
    readonly page: Page,
  ) {}

  static async open(browser: Browser, url: string): Promise<AppPage> {
    const context = await browser.newContext({
      viewport: { width: 1280, height: 800 },
      acceptDownloads: true,
    });
    await context.addInitScript(MONITOR);
    const page = await context.newPage();
    const app = new AppPage(context, page);
    page.on('pageerror', (e) => app.errors.push(e.message));
    const origin = new URL(url).origin;
    context.on('request', (r) => {
      const u = r.url();
      if (!(u.startsWith(origin + '/') || u.startsWith('data:') || u.startsWith('blob:')))
        app.foreign.push(u);
    });
    page.on('dialog', (d) => {
      app.dialogs.push(d.type());
      void d.accept();
    });
    await page.goto(url);
    await page.waitForSelector('.frame');
    return app;
  }

  /** Closes the page; any uncaught error the page raised meanwhile fails the test. */
  async close(): Promise<void> {
    await this.context.close();
    if (this.errors.length > 0)
      throw new Error(`the page raised uncaught errors: ${this.errors.join(' | ')}`);
  }

  async screen(id: 'triage' | 'deal' | 'market' | 'fit' | 'review'): Promise<void> {
    await this.page.click(`[data-screen=${id}]`);
  }

  /** Clicks `trigger`, answers the file chooser with `file`. */
  async upload(trigger: string, file: string): Promise<void> {
    const [chooser] = await Promise.all([this.page.waitForEvent('filechooser'), this.page.click(trigger)]);
    await chooser.setFiles(file);
  }

  /** Clicks `trigger` and saves the download into `dir`; returns its path. */
  async download(trigger: string, dir: string): Promise<string> {
    const [d]: [Download, void] = await Promise.all([
      this.page.waitForEvent('download'),
      this.page.click(trigger),
    ]);
    const p = path.join(dir, d.suggestedFilename());
    await d.saveAs(p);
    return p;
  }

  /** Saves a screenshot once passing notices have gone (errors stay: they are part of the picture). */
  async shot(dir: string, name: string, focus?: string): Promise<void> {
    fs.mkdirSync(dir, { recursive: true });
    await this.page
      .waitForFunction(() => !document.querySelector('.notice-success, .notice-info'), undefined, {
        timeout: 6000,
      })
      .catch(() => undefined);
    if (focus) await this.page.$eval(focus, (el) => el.scrollIntoView({ block: 'center' }));
    await this.page.screenshot({ path: path.join(dir, `${name}.png`) });
  }

  /** Types into a number or text field found by its data-path. */
  async fill(dataPath: string, text: string): Promise<void> {
    await this.page.fill(`[data-path="${dataPath}"]`, text);
  }

  async pickTemplate(id: string): Promise<void> {
    await this.screen('deal');
    await this.page.click(`[data-template="${id}"]`);
    await this.page.waitForFunction(() =>
      document.querySelector('[data-testid=deal-status]')?.textContent?.includes('No problems'),
    );
  }

  /** Sets small path counts so a run takes seconds. */
  async smallRun(paths: number, first: number, batch: number, lite: boolean): Promise<void> {
    await this.screen('triage');
    await this.fill('settings.paths', String(paths));
    await this.fill('settings.firstPaths', String(first));
    await this.fill('settings.batchSize', String(batch));
    if (lite) {
      for (const p of ['settings.greeks', 'settings.sweeps', 'settings.localVol'])
        if (await this.page.isChecked(`[data-path="${p}"]`)) await this.page.click(`[data-path="${p}"]`);
    }
  }

  async longTasksSince(t0: number): Promise<{ start: number; duration: number }[]> {
    return this.page.evaluate((t) => {
      const w = window as unknown as { __longTasks: { start: number; duration: number }[] };
      return w.__longTasks.filter((x) => x.start + x.duration >= t);
    }, t0);
  }

  async rafGapsSince(t0: number): Promise<{ start: number; duration: number }[]> {
    return this.page.evaluate((t) => {
      const w = window as unknown as { __rafGaps: { start: number; duration: number }[] };
      return w.__rafGaps.filter((x) => x.start >= t);
    }, t0);
  }

  async now(): Promise<number> {
    return this.page.evaluate(() => performance.now());
  }
}

/**
 * Share of 20,000 arguments on which each elementary function gives a different double in the page than in this
 * Node process: the usual cause when a study does not re-run bit for bit across runtimes.
 */
export async function mathMismatch(page: Page): Promise<Record<string, number>> {
  const probe = (): Record<string, number[]> => {
    const fns: Record<string, (x: number) => number> = {
      exp: Math.exp,
      log: Math.log,
      pow: (x) => Math.pow(x, 1.37),
      sin: Math.sin,
      cos: Math.cos,
      atan2: (x) => Math.atan2(x, 1.3),
      expm1: Math.expm1,
      sqrt: Math.sqrt,
    };
    let s = 12345;
    const xs: number[] = [];
    for (let i = 0; i < 20000; i++) {
      s = (s * 1103515245 + 12345) % 2147483648;
      xs.push((s / 2147483648) * 6 + 1e-3);
    }
    const out: Record<string, number[]> = {};
    for (const [k, f] of Object.entries(fns)) out[k] = xs.map(f);
    return out;
  };
  const here = probe();
  const there = await page.evaluate(probe);
  const rate: Record<string, number> = {};
  for (const k of Object.keys(here))
    rate[k] = here[k]!.filter((v, i) => v !== there[k]![i]).length / here[k]!.length;
  return rate;
}
