import { describe, it, expect, beforeEach, afterEach } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { printableReport, printReport } from '../../src/ui/platform/printReport.ts';
import { platform as desktop } from '../../src/ui/platform/platform.electron.ts';
import { platform as web } from '../../src/ui/platform/platform.web.ts';
import type { BridgeResult, DesktopBridge } from '../../src/ui/platform/desktopBridge.ts';
import { renderReport, CAUTION } from '../../src/report/index.ts';
import type { SavedStudy } from '../../src/engine/study/types.ts';

// The bundled invented demo study is only the input here: the checks are on what reaches the printer.
const demo = JSON.parse(
  fs.readFileSync(path.resolve(__dirname, '../../samples/studies/demo.study.json'), 'utf8'),
) as SavedStudy;
const html = renderReport(demo);

describe('print view of the report', () => {
  it('carries the whole report body: every section heading, the caution, the hash', () => {
    const p = printableReport(html);
    const headings = [...html.matchAll(/<h2[^>]*>([\s\S]*?)<\/h2>/g)].map((m) => m[1]);
    expect(headings.length).toBeGreaterThan(5);
    for (const h of headings) expect(p.body).toContain(`>${h}</h2>`);
    expect(p.body).toContain(CAUTION.slice(0, 60).replace(/&/g, '&amp;').replace(/'/g, '&#39;'));
    expect(p.body).toContain(demo.hash.slice(0, 16));
    // Nothing of the page outside <body> is carried into the app (SVG charts keep their own <title> tooltips).
    expect(p.body).not.toMatch(/<head[\s>]|<style|<\/?html|<\/?body/);
    expect(p.body).not.toContain(`<title>${p.title}`);
    expect(p.title).toMatch(/^Factor study — /);
  });
  it("turns the page's document-level selectors to the view's root and keeps every other rule", () => {
    const p = printableReport(html);
    expect(p.css).toMatch(/:host\{--ink/);
    expect(p.css).not.toMatch(/(^|[}\s,])(body|html|:root)[\s{,]/);
    expect(p.css).toMatch(/@media print\{/);
    const rules = (css: string) => (css.match(/\{/g) ?? []).length;
    const original = /<style>([\s\S]*?)<\/style>/.exec(html)![1]!;
    expect(rules(p.css)).toBe(rules(original));
  });
});

const calls: { method: string; req: unknown }[] = [];
const ok = <T>(value: T): Promise<BridgeResult<T>> => Promise.resolve({ ok: true, value });
const g = globalThis as unknown as { window?: { factorTriage?: Partial<DesktopBridge> } };

describe('print / save as PDF action', () => {
  beforeEach(() => {
    calls.length = 0;
    g.window = {
      factorTriage: {
        exportReportPdf: (req) => {
          calls.push({ method: 'exportReportPdf', req });
          return ok({ path: '/s/q3 report.pdf', name: 'q3 report.pdf' });
        },
        exportReportHtml: (req) => {
          calls.push({ method: 'exportReportHtml', req });
          return ok({ path: '/s/q3 report.html', name: 'q3 report.html' });
        },
      },
    };
  });
  afterEach(() => {
    delete g.window;
  });

  it('on the desktop prints the report to PDF through the shell, with no print view', async () => {
    const opened: string[] = [];
    const r = await printReport({
      platform: desktop,
      html,
      suggestedName: 'q3 report',
      openPrintView: (h) => opened.push(h),
    });
    expect(r).toEqual({ kind: 'pdf', target: { name: 'q3 report.pdf', handle: '/s/q3 report.pdf' } });
    expect(calls).toEqual([{ method: 'exportReportPdf', req: { html, suggestedName: 'q3 report' } }]);
    expect(opened).toEqual([]);
  });
  it('on the desktop reports a cancelled save dialog as cancelled', async () => {
    g.window!.factorTriage!.exportReportPdf = () => ok(null);
    const r = await printReport({ platform: desktop, html, suggestedName: 'x', openPrintView: () => {} });
    expect(r).toEqual({ kind: 'cancelled' });
  });
  it('on the desktop passes the shell’s error on with its message', async () => {
    g.window!.factorTriage!.exportReportPdf = () =>
      Promise.resolve({
        ok: false,
        error: { code: 'E_PRINT', field: 'html', message: 'printing failed: disk full' },
      });
    await expect(
      printReport({ platform: desktop, html, suggestedName: 'x', openPrintView: () => {} }),
    ).rejects.toThrow(/disk full/);
  });
  it('in the browser opens the print view with the whole report and writes no file', async () => {
    const opened: string[] = [];
    const r = await printReport({
      platform: web,
      html,
      suggestedName: 'x',
      openPrintView: (h) => opened.push(h),
    });
    expect(r).toEqual({ kind: 'printView' });
    expect(opened).toEqual([html]);
    expect(calls).toEqual([]);
  });
  it('in the browser a direct PDF export names the print action as the way to a PDF', async () => {
    await expect(web.exportReport({ html, suggestedName: 'x', format: 'pdf' })).rejects.toThrow(
      /Print \/ save as PDF.*Save as PDF/,
    );
  });
});

describe('print view markup', () => {
  it('carries inline styles as data attributes, never as style attributes the page policy would refuse', () => {
    const p = printableReport(html);
    const inline = (html.match(/\sstyle="/g) ?? []).length;
    expect(inline).toBeGreaterThan(0);
    expect(p.body).not.toMatch(/\sstyle=/);
    expect((p.body.match(/\sdata-print-style="/g) ?? []).length).toBe(inline);
    expect(p.body).toMatch(/<span class="badge" data-print-style="background:#[0-9a-f]{6}">/);
  });
});
