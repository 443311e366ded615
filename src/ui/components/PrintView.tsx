/**
 * The report in a print-ready view over the app: the whole report page (its own styles, in a shadow root so they
 * do not touch the app), the caution above it, and a bar with "Print / save as PDF" and "Back". On opening it
 * calls the browser's print dialog; when printing, only the report is on paper (the app frame and the bar are
 * hidden by the print style sheet).
 */
import { useEffect, useRef } from 'react';
import { APP_CAUTION } from '../caution.ts';
import { printableReport } from '../platform/printReport.ts';

/** Fills `host`'s shadow root with the report: styles as a constructed sheet, `style` attributes via CSSOM. */
function mountReport(host: HTMLElement, html: string): void {
  const report = printableReport(html);
  const root = host.shadowRoot ?? host.attachShadow({ mode: 'open' });
  const sheet = new CSSStyleSheet();
  sheet.replaceSync(report.css);
  root.adoptedStyleSheets = [sheet];
  const parsed = new DOMParser().parseFromString(
    `<!doctype html><html><body>${report.body}</body></html>`,
    'text/html',
  );
  const styled: { el: Element; css: string }[] = [];
  for (const el of parsed.body.querySelectorAll('[data-print-style]')) {
    styled.push({ el, css: el.getAttribute('data-print-style') ?? '' });
    el.removeAttribute('data-print-style');
  }
  // Scripts never run in the view (the report has none; any found are dropped).
  for (const s of parsed.body.querySelectorAll('script')) s.remove();
  root.replaceChildren(...[...parsed.body.childNodes].map((n) => document.adoptNode(n)));
  for (const { el, css } of styled) (el as HTMLElement | SVGElement).style.cssText = css;
}

export function PrintView(props: { html: string; onClose(): void; autoPrint?: boolean }) {
  const host = useRef<HTMLDivElement>(null);
  const back = useRef<HTMLButtonElement>(null);
  const { html, onClose } = props;
  const autoPrint = props.autoPrint !== false;

  useEffect(() => {
    if (!host.current) return;
    mountReport(host.current, html);
    document.documentElement.classList.add('printing');
    // The app behind the view takes no focus or clicks while the view is open (Tab stays in the view).
    const frame = document.querySelector('.frame');
    frame?.setAttribute('inert', '');
    back.current?.focus();
    let raf = 0;
    if (autoPrint) raf = requestAnimationFrame(() => requestAnimationFrame(() => window.print()));
    return () => {
      cancelAnimationFrame(raf);
      frame?.removeAttribute('inert');
      document.documentElement.classList.remove('printing');
    };
  }, [html, autoPrint]);

  useEffect(() => {
    const onKey = (e: KeyboardEvent): void => {
      if (e.key === 'Escape') {
        e.preventDefault();
        e.stopPropagation();
        onClose();
      }
    };
    window.addEventListener('keydown', onKey, true);
    return () => window.removeEventListener('keydown', onKey, true);
  }, [onClose]);

  return (
    <div
      className="print-view"
      role="dialog"
      aria-modal="true"
      aria-label="Report ready to print"
      data-testid="print-view"
    >
      <div className="print-bar">
        <button ref={back} onClick={onClose} data-testid="print-close">
          Back to the app (Esc)
        </button>
        <button onClick={() => window.print()} data-testid="print-again">
          Print / save as PDF…
        </button>
        <span className="hint">
          In the print dialog choose a printer, or “Save as PDF” as the destination. Only the report is
          printed.
        </span>
      </div>
      <p className="print-caution" role="note" data-testid="print-caution">
        {APP_CAUTION}
      </p>
      <div className="print-report" ref={host} data-testid="print-report-body" />
    </div>
  );
}
