/**
 * "Print / save as PDF": the desktop shell prints the report to a PDF file itself (through the preload bridge);
 * the browser opens the report in a print-ready view and calls the browser's print dialog, where the user picks
 * a printer or "save as PDF".
 */
import type { Platform, SavedTarget } from './platform.ts';

/** What the print action did: a PDF written by the host, a print view opened, or nothing (cancelled). */
export type PrintOutcome =
  { kind: 'pdf'; target: SavedTarget } | { kind: 'printView' } | { kind: 'cancelled' };

/**
 * Prints the report: through the host's PDF export when the platform has one, otherwise by handing the report
 * HTML to `openPrintView` (which shows it ready for printing and calls print).
 */
export async function printReport(req: {
  platform: Pick<Platform, 'canExportPdf' | 'exportReport'>;
  html: string;
  suggestedName: string;
  openPrintView(html: string): void;
}): Promise<PrintOutcome> {
  if (req.platform.canExportPdf) {
    const target = await req.platform.exportReport({
      html: req.html,
      suggestedName: req.suggestedName,
      format: 'pdf',
    });
    return target ? { kind: 'pdf', target } : { kind: 'cancelled' };
  }
  req.openPrintView(req.html);
  return { kind: 'printView' };
}

/** A report split into what the print view needs: its title, its style sheet and the markup of its body. */
export interface PrintableReport {
  title: string;
  /** The report's CSS, with document-level selectors (`:root`, `html`, `body`) turned to the view's root. */
  css: string;
  /** The markup inside `<body>`, with each `style` attribute renamed `data-print-style` (see below). */
  body: string;
}

/**
 * Splits a self-contained report page for showing inside the app. The page's own `<style>` cannot be used as is
 * under the app's content security policy (no inline styles), so the print view applies `css` as a constructed
 * style sheet, and `style` attributes travel as `data-print-style` for the view to set on the elements' style
 * objects (parsing them as `style` would be refused by the policy).
 */
export function printableReport(html: string): PrintableReport {
  const title = /<title>([\s\S]*?)<\/title>/i.exec(html)?.[1]?.trim() ?? 'Report';
  const css = [...html.matchAll(/<style[^>]*>([\s\S]*?)<\/style>/gi)].map((m) => m[1]!).join('\n');
  const body = (/<body[^>]*>([\s\S]*)<\/body>/i.exec(html)?.[1] ?? html).replace(
    /(<[a-zA-Z][^<>]*?\s)style=("[^"]*"|'[^']*')/g,
    '$1data-print-style=$2',
  );
  return {
    title: decodeEntities(title),
    css: css.replace(/(^|[}\s,])(:root|html|body)(?=[\s{,])/g, '$1:host'),
    body,
  };
}

function decodeEntities(s: string): string {
  return s
    .replace(/&lt;/g, '<')
    .replace(/&gt;/g, '>')
    .replace(/&quot;/g, '"')
    .replace(/&#39;/g, "'")
    .replace(/&amp;/g, '&');
}
