/**
 * The application frame: a rail of screens on the left, the working screen in the middle, the caution
 * always visible at the foot. Owns the document, the engine client and the one long task.
 */
import { useCallback, useEffect, useMemo, useReducer, useRef, useState } from 'react';
import { isApiError, type EngineClient } from '../engine/api/index.ts';
import { APP_CAUTION } from './caution.ts';
import { PrintView } from './components/PrintView.tsx';
import { printReport } from './platform/printReport.ts';
import { platform } from './platform/current.ts';
import { AppContext, errorText, type AppApi, type Notice, type TaskState } from './state/appContext.ts';
import {
  DEFAULT_SETTINGS,
  documentReducer,
  parseDraft,
  serializeDraft,
  suggestedName,
  type StudyDocument,
} from './state/document.ts';
import { DEAL_TEMPLATES, DEMO_MARKET, DEMO_SERIES, loadDemoStudyText } from './state/samples.ts';
import { RawContext } from './components/fields.tsx';
import { ScreenBoundary } from './components/ScreenBoundary.tsx';
import { DealScreen } from './screens/DealScreen.tsx';
import { MarketScreen } from './screens/MarketScreen.tsx';
import { FitScreen } from './screens/FitScreen.tsx';
import { TriageScreen } from './screens/TriageScreen.tsx';
import { ReviewScreen } from './screens/ReviewScreen.tsx';

export type ScreenId = 'deal' | 'market' | 'fit' | 'triage' | 'review';

const SCREENS: { id: ScreenId; label: string; blurb: string }[] = [
  { id: 'triage', label: 'Triage', blurb: 'verdicts, run' },
  { id: 'deal', label: 'Deal', blurb: 'payoff, schedules' },
  { id: 'market', label: 'Market', blurb: 'curves, vols, correlation' },
  { id: 'fit', label: 'Fit', blurb: 'calibration of each model' },
  { id: 'review', label: 'Review', blurb: 'verify, compare, export' },
];

const DRAFT_KEY = 'draft';

function blankDocument(): StudyDocument {
  const template = DEAL_TEMPLATES[0]?.deal;
  return {
    deal: template ?? {
      format: 'factor-triage/deal@1',
      name: 'New deal',
      notional: 1_000_000,
      currency: 'DOM',
      underlyings: {},
      schedules: {},
      events: [],
    },
    markets: DEMO_MARKET ? [DEMO_MARKET, ...DEMO_SERIES.filter((m) => m.date !== DEMO_MARKET!.date)] : [],
    settings: DEFAULT_SETTINGS,
    raw: {},
    study: null,
    fileName: null,
    handle: null,
    dirty: false,
    stale: false,
  };
}

export function App(props: { engine: EngineClient }) {
  const { engine } = props;
  const restored = useMemo(() => parseDraft(platform.drafts.load(DRAFT_KEY)), []);
  const [doc, dispatch] = useReducer(documentReducer, undefined, () => restored?.doc ?? blankDocument());
  const [screen, setScreen] = useState<ScreenId>('triage');
  const [task, setTask] = useState<TaskState>({ kind: 'idle' });
  const [notices, setNotices] = useState<Notice[]>([]);
  const [served, setServed] = useState<Set<string>>(new Set());
  const [booting, setBooting] = useState(!restored);
  const taskAbort = useRef<AbortController | null>(null);
  const noticeId = useRef(0);
  const docRef = useRef(doc);
  docRef.current = doc;

  const notify = useCallback((tone: Notice['tone'], text: string) => {
    const id = ++noticeId.current;
    setNotices((n) => [...n.slice(-1), { id, tone, text }]);
    setTimeout(() => setNotices((n) => n.filter((x) => x.id !== id)), tone === 'error' ? 12_000 : 3_000);
  }, []);

  useEffect(() => {
    engine.call('engine.info', {}).then(
      (info) => setServed(new Set(info.methods)),
      (e) => notify('error', `The engine did not start: ${errorText(e)}`),
    );
  }, [engine, notify]);

  const openStudyText = useCallback(
    async (name: string, text: string, handle: string | null): Promise<boolean> => {
      if (
        docRef.current.dirty &&
        !window.confirm(`Open ${name}? It replaces the inputs and results you have not saved.`)
      )
        return false;
      try {
        const { study, hash } = await engine.call('study.open', { text });
        dispatch({ type: 'studyOpened', study, fileName: name, handle });
        if (!hash.ok)
          notify(
            'error',
            `${name} opened, but its content no longer matches its hash: it was edited after saving. Verify re-runs it.`,
          );
        else notify('success', `Opened ${name}.`);
        return true;
      } catch (e) {
        notify('error', `${name} was not opened: ${errorText(e)}`);
        return false;
      }
    },
    [engine, notify],
  );

  // First start: open the bundled demo study so a new user sees a full answer at once.
  useEffect(() => {
    if (restored) return;
    let live = true;
    loadDemoStudyText()
      .then(async (demo) => {
        if (demo && live) await openStudyText(demo.name, demo.text, null);
      })
      .finally(() => live && setBooting(false));
    return () => {
      live = false;
    };
  }, [restored, openStudyText]);

  // Autosave the draft (inputs, typed texts, and the study when it fits).
  useEffect(() => {
    const t = setTimeout(() => platform.drafts.save(DRAFT_KEY, serializeDraft(doc, Date.now())), 400);
    return () => clearTimeout(t);
  }, [doc]);

  // Whatever happens next, the latest edits are in the draft when the page goes away.
  useEffect(() => {
    const onHide = (): void => platform.drafts.save(DRAFT_KEY, serializeDraft(docRef.current, Date.now()));
    window.addEventListener('pagehide', onHide);
    return () => window.removeEventListener('pagehide', onHide);
  }, []);

  // Closing asks when there are unsaved changes.
  useEffect(() => {
    platform.setDocumentState({
      dirty: doc.dirty,
      title: doc.fileName ?? doc.deal?.name ?? 'Untitled study',
    });
    // The desktop shell asks in its own close dialog; a page-level prompt there would silently block closing.
    if (!doc.dirty || platform.kind === 'desktop') return;
    const onBeforeUnload = (e: BeforeUnloadEvent): void => {
      platform.drafts.save(DRAFT_KEY, serializeDraft(docRef.current, Date.now()));
      e.preventDefault();
    };
    window.addEventListener('beforeunload', onBeforeUnload);
    return () => window.removeEventListener('beforeunload', onBeforeUnload);
  }, [doc.dirty, doc.fileName, doc.deal?.name]);

  const runTask = useCallback(
    async (op: 'run' | 'verify') => {
      if (taskAbort.current) return;
      const ac = new AbortController();
      taskAbort.current = ac;
      setTask({
        kind: 'running',
        op,
        progress: { fraction: 0, stage: 'starting' },
        startedAt: performance.now(),
      });
      const onProgress = (p: { fraction: number; stage: string; detail?: string }): void =>
        setTask((t) => (t.kind === 'running' ? { ...t, progress: p } : t));
      try {
        if (op === 'run') {
          const d = docRef.current;
          const study = await engine.call(
            'study.run',
            { input: { deal: d.deal, markets: d.markets, settings: d.settings } },
            { signal: ac.signal, onProgress },
          );
          dispatch({ type: 'studyRan', study });
          setTask({ kind: 'idle' });
          notify('success', 'Study finished: the verdicts are up to date.');
        } else {
          const s = docRef.current.study;
          if (!s) throw { code: 'E_NO_STUDY', message: 'open or run a study first', issues: [] };
          const outcome = await engine.call('study.verify', { study: s }, { signal: ac.signal, onProgress });
          setTask({ kind: 'verified', outcome });
        }
      } catch (e) {
        if (isApiError(e) && e.code === 'E_CANCELLED') setTask({ kind: 'cancelled', op });
        else
          setTask({
            kind: 'failed',
            op,
            error: isApiError(e) ? e : { code: 'E_INTERNAL', message: errorText(e), issues: [] },
          });
      } finally {
        taskAbort.current = null;
      }
    },
    [engine, notify],
  );

  const cancelTask = useCallback(() => taskAbort.current?.abort(), []);

  const openStudyFile = useCallback(async () => {
    try {
      const f = await platform.pickFile('study');
      if (f) await openStudyText(f.name, f.text, f.handle);
    } catch (e) {
      notify('error', `Could not open the file: ${errorText(e)}`);
    }
  }, [openStudyText, notify]);

  const saveStudy = useCallback(
    async (saveAs: boolean) => {
      const d = docRef.current;
      if (!d.study) {
        notify('error', 'There is no study to save yet: run one on the Triage screen first.');
        return;
      }
      try {
        const r = await platform.saveFile({
          kind: 'study',
          suggestedName: suggestedName(d),
          text: JSON.stringify(d.study, null, 1) + '\n',
          handle: saveAs ? null : d.handle,
        });
        if (r) {
          dispatch({ type: 'saved', fileName: r.name, handle: r.handle });
          notify('success', `Saved ${r.name}.`);
        }
      } catch (e) {
        notify('error', `The study was not saved: ${errorText(e)}`);
      }
    },
    [notify],
  );

  const exportReport = useCallback(
    async (format: 'html' | 'pdf') => {
      const d = docRef.current;
      if (!d.study) {
        notify(
          'error',
          'There is no study to report on yet: run one on the Triage screen or open a saved study.',
        );
        return;
      }
      try {
        const { html } = await engine.call('report.render', { study: d.study });
        const r = await platform.exportReport({ html, suggestedName: suggestedName(d) + ' report', format });
        if (r) notify('success', `Report written: ${r.name}.`);
      } catch (e) {
        notify('error', `The report was not exported: ${errorText(e)}`);
      }
    },
    [engine, notify],
  );

  // The report in the browser's print dialog, or (desktop) printed to a PDF file by the shell.
  const [printHtml, setPrintHtml] = useState<string | null>(null);
  const printStudyReport = useCallback(async () => {
    const d = docRef.current;
    if (!d.study) {
      notify('error', 'There is no study to print yet: run one on the Triage screen or open a saved study.');
      return;
    }
    try {
      const { html } = await engine.call('report.render', { study: d.study });
      const r = await printReport({
        platform,
        html,
        suggestedName: suggestedName(d) + ' report',
        openPrintView: setPrintHtml,
      });
      if (r.kind === 'pdf') notify('success', `Report written: ${r.target.name}.`);
    } catch (e) {
      notify('error', `The report was not printed: ${errorText(e)}`);
    }
  }, [engine, notify]);
  const closePrint = useCallback(() => setPrintHtml(null), []);

  const api: AppApi = useMemo(
    () => ({
      doc,
      dispatch,
      engine,
      platform,
      task,
      notify,
      runStudy: () => void runTask('run'),
      verifyStudy: () => void runTask('verify'),
      cancelTask,
      openStudyFile,
      openStudyText,
      saveStudy,
      exportReport,
      printReport: printStudyReport,
      served,
    }),
    [
      doc,
      engine,
      task,
      notify,
      runTask,
      cancelTask,
      openStudyFile,
      openStudyText,
      saveStudy,
      exportReport,
      printStudyReport,
      served,
    ],
  );

  // Keyboard: Alt+1..5 screens, Ctrl/Cmd+O open, +S save, +Shift+S save as, +Enter run, Escape cancels a run.
  useEffect(() => {
    const onKey = (e: KeyboardEvent): void => {
      const mod = e.ctrlKey || e.metaKey;
      if (e.altKey && !mod && /^[1-5]$/.test(e.key)) {
        e.preventDefault();
        setScreen(SCREENS[Number(e.key) - 1]!.id);
      } else if (mod && e.key.toLowerCase() === 'o') {
        e.preventDefault();
        void openStudyFile();
      } else if (mod && e.key.toLowerCase() === 's') {
        e.preventDefault();
        void saveStudy(e.shiftKey);
      } else if (mod && e.key === 'Enter') {
        e.preventDefault();
        void runTask('run');
      } else if (e.key === 'Escape' && taskAbort.current) {
        cancelTask();
      }
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, [openStudyFile, saveStudy, runTask, cancelTask]);

  useEffect(
    () =>
      platform.onMenuCommand((cmd) => {
        if (cmd === 'open') void openStudyFile();
        else if (cmd === 'save') void saveStudy(false);
        else if (cmd === 'save-as') void saveStudy(true);
        else if (cmd === 'export-html') void exportReport('html');
        else if (cmd === 'export-pdf') void exportReport('pdf');
      }),
    [openStudyFile, saveStudy, exportReport],
  );

  const raw = useMemo(
    () => ({
      raw: doc.raw,
      setRaw: (path: string, text: string | null) => dispatch({ type: 'setRaw', path, text }),
    }),
    [doc.raw],
  );

  const title = doc.fileName ?? (doc.study ? 'Unsaved study' : 'New study');
  return (
    <AppContext.Provider value={api}>
      <RawContext.Provider value={raw}>
        <div className="frame">
          <header className="topbar">
            <div className="brand" aria-label="Factor Triage">
              <span className="brand-mark" aria-hidden="true">
                <svg viewBox="0 0 24 24" width="22" height="22">
                  <path d="M3 20 L12 4 L21 20 Z" fill="none" stroke="currentColor" strokeWidth="2" />
                  <circle cx="12" cy="14" r="2.4" fill="currentColor" />
                </svg>
              </span>
              Factor Triage
            </div>
            <div className="doc-title" data-testid="doc-title">
              {title}
              {doc.dirty && (
                <span className="dirty" title="unsaved changes (a draft is kept automatically)">
                  {' '}
                  · unsaved
                </span>
              )}
              {doc.stale && <span className="stale"> · inputs changed since the last run</span>}
            </div>
            <div className="top-actions">
              <button onClick={() => void openStudyFile()} title="Open a saved study (Ctrl+O)">
                Open…
              </button>
              <button
                onClick={() => void saveStudy(false)}
                disabled={!doc.study}
                title={
                  doc.stale
                    ? 'Save the study as last run (Ctrl+S); edits made since are kept in the draft — run again to include them'
                    : 'Save the study (Ctrl+S)'
                }
              >
                Save
              </button>
              <button
                onClick={() => void saveStudy(true)}
                disabled={!doc.study}
                title="Save under a new name (Ctrl+Shift+S)"
              >
                Save as…
              </button>
            </div>
          </header>
          <nav className="rail" aria-label="Screens">
            {SCREENS.map((s, i) => (
              <button
                key={s.id}
                className={`rail-item ${screen === s.id ? 'current' : ''}`}
                aria-current={screen === s.id ? 'page' : undefined}
                onClick={() => setScreen(s.id)}
                title={`${s.label} (Alt+${i + 1})`}
                data-screen={s.id}
              >
                <span className="rail-key">{i + 1}</span>
                <span className="rail-label">{s.label}</span>
                <span className="rail-blurb">{s.blurb}</span>
              </button>
            ))}
            <div className="rail-foot">
              <TaskChip task={task} onCancel={cancelTask} />
              <dl className="keys" aria-label="Keyboard shortcuts">
                <dt>Alt+1…5</dt>
                <dd>screens</dd>
                <dt>Ctrl+Enter</dt>
                <dd>run study</dd>
                <dt>Esc</dt>
                <dd>cancel run</dd>
                <dt>Ctrl+O / S</dt>
                <dd>open / save</dd>
              </dl>
            </div>
          </nav>
          <main className="work" id="work">
            <ScreenBoundary key={screen} name={SCREENS.find((x) => x.id === screen)!.label}>
              {booting ? (
                <p className="empty">Opening the demo study…</p>
              ) : screen === 'deal' ? (
                <DealScreen />
              ) : screen === 'market' ? (
                <MarketScreen />
              ) : screen === 'fit' ? (
                <FitScreen />
              ) : screen === 'triage' ? (
                <TriageScreen goTo={setScreen} />
              ) : (
                <ReviewScreen />
              )}
            </ScreenBoundary>
          </main>
          <footer className="caution" role="note" data-testid="caution">
            {APP_CAUTION}
          </footer>
          <div className="notices" aria-live="polite">
            {notices.map((n) => (
              <div
                key={n.id}
                className={`notice notice-${n.tone}`}
                role={n.tone === 'error' ? 'alert' : 'status'}
              >
                {n.text}
              </div>
            ))}
          </div>
        </div>
        {printHtml !== null && <PrintView html={printHtml} onClose={closePrint} />}
      </RawContext.Provider>
    </AppContext.Provider>
  );
}

function TaskChip(props: { task: TaskState; onCancel(): void }) {
  const t = props.task;
  if (t.kind !== 'running') return null;
  return (
    <div className="task-chip" aria-live="polite">
      <div>
        {t.op === 'run' ? 'Running study' : 'Verifying'} · {Math.round(t.progress.fraction * 100)}%
      </div>
      <button onClick={props.onCancel}>Cancel (Esc)</button>
    </div>
  );
}
