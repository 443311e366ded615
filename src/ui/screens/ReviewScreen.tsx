/**
 * Review: what a model committee does with a saved study — see where it came from, verify that it re-runs
 * bit for bit, compare it with another study, and export the report.
 */
import { factorShortName } from '../components/factorNames.ts';
import { useEffect, useState } from 'react';
import type { StudyDiff, FieldChange } from '../../engine/study/diff.ts';
import type { SavedStudy } from '../../engine/study/types.ts';
import type { RecentFile } from '../platform/platform.ts';
import { errorText, useApp } from '../state/appContext.ts';
import { num } from '../components/format.ts';
import { loadDemoStudyText } from '../state/samples.ts';

function show(v: unknown): string {
  if (v === undefined) return '(absent)';
  // Full precision: a verification may differ in the last digit only.
  if (typeof v === 'number') return Number.isFinite(v) ? String(v).replace('-', '−') : num(v);
  const s = JSON.stringify(v);
  return s.length > 90 ? s.slice(0, 87) + '…' : s;
}

function ChangeTable(props: { title: string; rows: FieldChange[]; testId?: string }) {
  if (props.rows.length === 0) return null;
  return (
    <>
      <h3>{props.title}</h3>
      <table className="data diff" data-testid={props.testId}>
        <thead>
          <tr>
            <th>Field</th>
            <th>First study</th>
            <th>Second study</th>
            <th className="num">Change</th>
          </tr>
        </thead>
        <tbody>
          {props.rows.slice(0, 60).map((c) => (
            <tr key={c.field}>
              <td className="mono">{c.field}</td>
              <td className="mono">{show(c.a)}</td>
              <td className="mono">{show(c.b)}</td>
              <td className="num">{c.change !== undefined ? num(c.change, 4) : ''}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {props.rows.length > 60 && <p className="hint">…and {props.rows.length - 60} more changes.</p>}
    </>
  );
}

/** Two numbers that differ only in their last few binary digits (a rounding difference, not a change). */
function lastDigitsOnly(a: unknown, b: unknown): boolean {
  if (typeof a !== 'number' || typeof b !== 'number' || a === b || !Number.isFinite(a) || !Number.isFinite(b))
    return false;
  return Math.abs(a - b) <= 64 * Number.EPSILON * Math.max(Math.abs(a), Math.abs(b));
}

/** "1 setting", "3 settings". */
function count(n: number, noun: string): string {
  return `${n} ${noun}${n === 1 ? '' : 's'}`;
}

export function ReviewScreen() {
  const app = useApp();
  const { doc, task, engine, platform, notify } = app;
  const s = doc.study;
  const [other, setOther] = useState<{ name: string; study: SavedStudy } | null>(null);
  const [diff, setDiff] = useState<StudyDiff | null>(null);
  const [diffError, setDiffError] = useState<string | null>(null);
  const [hashOk, setHashOk] = useState<boolean | null>(null);
  const [recent, setRecent] = useState<RecentFile[]>([]);

  useEffect(() => {
    platform.recentFiles().then(setRecent, () => setRecent([]));
  }, [platform, doc.fileName]);

  useEffect(() => {
    setHashOk(null);
    if (!s) return;
    let live = true;
    engine
      .call('study.open', { text: JSON.stringify(s) })
      .then((o) => live && setHashOk(o.hash.ok))
      .catch(() => live && setHashOk(false));
    return () => {
      live = false;
    };
  }, [s, engine]);

  useEffect(() => {
    setDiff(null);
    if (!s || !other) return;
    engine.call('study.diff', { a: s, b: other.study }).then(setDiff, (e) => setDiffError(errorText(e)));
  }, [s, other, engine]);

  const pickOther = async (): Promise<void> => {
    setDiffError(null);
    try {
      const f = await platform.pickFile('study');
      if (!f) return;
      const o = await engine.call('study.open', { text: f.text });
      setOther({ name: f.name, study: o.study });
      if (!o.hash.ok)
        notify(
          'error',
          `${f.name}: its content no longer matches its hash (edited after saving). The comparison is shown; get the original file, or open this one and verify it, before relying on it.`,
        );
    } catch (e) {
      setDiffError(`That file was refused: ${errorText(e)}`);
    }
  };

  const verifying = task.kind === 'running' && task.op === 'verify';
  return (
    <div className="screen review">
      <h1>Review</h1>
      <div className="review-grid">
        <section className="panel">
          <h2>This study</h2>
          {s ? (
            <dl className="facts" data-testid="study-facts">
              <dt>File</dt>
              <dd>{doc.fileName ?? 'not saved yet'}</dd>
              <dt>Deal</dt>
              <dd>{s.input.deal.name}</dd>
              <dt>Market date(s)</dt>
              <dd>{s.input.markets.map((m) => m.date).join(', ')}</dd>
              <dt>Written by</dt>
              <dd>
                {s.tool.name} {s.tool.version}
              </dd>
              <dt>Seed · paths</dt>
              <dd>
                {String(s.input.settings.seed)} · {s.input.settings.paths}
              </dd>
              <dt>Content hash</dt>
              <dd className="hash" title={s.hash}>
                <span className="mono">{s.hash.slice(0, 16)}…</span>{' '}
                {hashOk === null ? (
                  ''
                ) : hashOk ? (
                  <span className="ok">matches the content</span>
                ) : (
                  <span className="bad">does not match: edited after saving</span>
                )}
              </dd>
            </dl>
          ) : (
            <p className="empty">No study is open. Open a saved study, or run one on the Triage screen.</p>
          )}
          {s && doc.stale && (
            <p className="msg-warn" data-testid="review-stale">
              The deal, market or settings were edited after this study was made: verifying, saving and the
              report use the study as it was run. Run it again on the Triage screen to include the edits.
            </p>
          )}
          <div className="button-row">
            <button onClick={() => void app.openStudyFile()} data-testid="review-open">
              Open study…
            </button>
            <button onClick={() => void app.saveStudy(false)} disabled={!s} data-testid="review-save">
              Save study
            </button>
            {platform.reveal && doc.handle && (
              <button
                onClick={() => {
                  const h = doc.handle!;
                  platform.reveal!(h).catch((e) =>
                    notify('error', `Could not show the file: ${errorText(e)}`),
                  );
                }}
              >
                Show in folder
              </button>
            )}
          </div>
          <div className="button-row">
            <button
              className="small"
              onClick={async () => {
                const demo = await loadDemoStudyText();
                if (!demo) {
                  notify('error', 'This build has no bundled demo study.');
                  return;
                }
                await app.openStudyText(demo.name, demo.text, null);
              }}
              data-testid="reopen-demo"
            >
              Open the bundled demo study
            </button>
          </div>
          {recent.length > 0 && (
            <>
              <h3>Recent</h3>
              <ul className="recent">
                {recent.map((r) => (
                  <li key={r.path}>
                    <button
                      className="link"
                      onClick={async () => {
                        try {
                          const f = await platform.openRecent(r.path);
                          await app.openStudyText(f.name, f.text, f.handle);
                        } catch (e) {
                          notify('error', `Could not open ${r.name}: ${errorText(e)}`);
                        }
                      }}
                    >
                      {r.name}
                    </button>{' '}
                    <span className="hint">{new Date(r.at).toLocaleString()}</span>
                  </li>
                ))}
              </ul>
            </>
          )}
        </section>

        <section className="panel">
          <h2>Verify</h2>
          <p className="hint">
            Re-runs the study from its own inputs, settings and seed and compares every result bit for bit
            (timings aside). An edited file fails on its hash.
          </p>
          <div className="button-row">
            {verifying ? (
              <button className="danger" onClick={app.cancelTask}>
                Cancel verification
              </button>
            ) : (
              <button
                onClick={app.verifyStudy}
                disabled={!s || task.kind === 'running' || !app.served.has('study.verify')}
                data-testid="verify"
              >
                Verify by re-running
              </button>
            )}
          </div>
          {!app.served.has('study.verify') && (
            <p className="msg-warn">This build's engine cannot re-run studies yet.</p>
          )}
          {verifying && (
            <div
              className="progress"
              role="progressbar"
              aria-valuenow={Math.round(task.progress.fraction * 100)}
            >
              <div
                className="progress-bar"
                style={{ width: `${Math.round(task.progress.fraction * 100)}%` }}
              />
              <div className="progress-text">
                {Math.round(task.progress.fraction * 100)}% · {task.progress.stage}
              </div>
            </div>
          )}
          {task.kind === 'verified' && (
            <div
              className={`banner ${task.outcome.identical ? 'banner-ok' : 'banner-error'}`}
              data-testid="verify-result"
            >
              <strong>{task.outcome.identical ? 'Reproduced bit for bit.' : 'Not reproduced.'}</strong>{' '}
              {task.outcome.message.charAt(0).toUpperCase() + task.outcome.message.slice(1)}
              {task.outcome.difference && (
                <div className="mono">
                  {task.outcome.difference.field}: saved {show(task.outcome.difference.saved)}, re-run{' '}
                  {show(task.outcome.difference.rerun)}
                </div>
              )}
              {task.outcome.difference &&
                lastDigitsOnly(task.outcome.difference.saved, task.outcome.difference.rerun) && (
                  <p data-testid="verify-runtime-note">
                    The first difference is in the last binary digits (relative{' '}
                    {num(
                      Math.abs(
                        Number(task.outcome.difference.rerun) / Number(task.outcome.difference.saved) - 1,
                      ),
                      2,
                    )}
                    ). That is the signature of a study made in another JavaScript runtime (a browser, or
                    another Node version) whose elementary functions such as exp and log round differently,
                    not of an edit{task.outcome.hashOk ? ' (the hash matches)' : ''}. Later results may differ
                    by more where such differences are amplified; a bit-for-bit check needs the same runtime.
                  </p>
                )}
            </div>
          )}
          {task.kind === 'failed' && task.op === 'verify' && (
            <div className="banner banner-error">Verification failed: {task.error.message}</div>
          )}
          {task.kind === 'cancelled' && task.op === 'verify' && (
            <div className="banner">Verification cancelled.</div>
          )}
        </section>

        <section className="panel">
          <h2>Export</h2>
          <p className="hint">
            A self-contained report: the answer first, then the evidence, the reproducibility data and the
            limitations.
          </p>
          <div className="button-row">
            <button onClick={() => void app.exportReport('html')} disabled={!s} data-testid="export-html">
              Export report (HTML)
            </button>
            <button onClick={() => void app.printReport()} disabled={!s} data-testid="print-report">
              {platform.canExportPdf ? 'Print / save as PDF…' : 'Print / save as PDF'}
            </button>
          </div>
          <p className="hint">
            {platform.canExportPdf
              ? 'The PDF is printed from the same report, A4, with its charts and the caution.'
              : 'Opens the report ready to print and the print dialog; choose “Save as PDF” there for a file.'}
          </p>
        </section>
      </div>

      <section className="panel wide">
        <h2>Compare with another study</h2>
        <div className="button-row">
          <button onClick={() => void pickOther()} disabled={!s} data-testid="diff-open">
            Choose the second study…
          </button>
          {other && <span>Comparing with {other.name}</span>}
        </div>
        {diffError && (
          <p className="msg-error" role="alert" data-testid="diff-error">
            {diffError}
          </p>
        )}
        {diff && (
          <div data-testid="diff-result">
            <p className={diff.identical ? 'ok' : ''}>
              {diff.identical
                ? 'The two studies agree in inputs, settings and results.'
                : `Changes: ${count(diff.deal.length, 'deal field')}, ${count(diff.markets.length, 'market field')}, ${count(diff.settings.length, 'setting')}, ${count(diff.results.length, 'result')}; ${count(diff.verdicts.length, 'verdict')} changed.`}
              {diff.sameHash ? ' Same hash.' : ''}
            </p>
            {diff.verdicts.length > 0 && (
              <table className="data" data-testid="diff-verdicts">
                <thead>
                  <tr>
                    <th>Factor</th>
                    <th>First</th>
                    <th>Second</th>
                  </tr>
                </thead>
                <tbody>
                  {diff.verdicts.map((v) => (
                    <tr key={v.factor}>
                      <td>{factorShortName(v.factor)}</td>
                      <td>{v.a}</td>
                      <td>{v.b}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            )}
            <ChangeTable title="Settings" rows={diff.settings} testId="diff-settings" />
            <ChangeTable title="Deal" rows={diff.deal} />
            <ChangeTable title="Market" rows={diff.markets} />
            <ChangeTable title="Results" rows={diff.results} />
            {diff.truncated && <p className="hint">Some sections had too many changes and were cut.</p>}
          </div>
        )}
      </section>
    </div>
  );
}
