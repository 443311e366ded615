/** A paste-or-import box for CSV: the text stays in the box when it cannot be read, with the reason beside it. */
import { useId, useState } from 'react';
import { CsvError, parseCsv, type CsvTable } from './csv.ts';
import { errorText, useApp } from '../state/appContext.ts';

export function CsvPaste(props: {
  title: string;
  hint: string;
  /** Applies the table; returns an error message when its shape does not fit. */
  apply(t: CsvTable): string | null;
}) {
  const { platform } = useApp();
  const [open, setOpen] = useState(false);
  const [text, setText] = useState('');
  const [error, setError] = useState<string | null>(null);
  const id = useId();
  const run = (t: string): void => {
    try {
      const table = parseCsv(t);
      const why = props.apply(table);
      if (why) setError(why);
      else {
        setError(null);
        setText('');
        setOpen(false);
      }
    } catch (e) {
      setError(e instanceof CsvError ? `Could not read the table: ${e.message}` : errorText(e));
    }
  };
  if (!open)
    return (
      <button className="small" onClick={() => setOpen(true)}>
        Paste or import CSV…
      </button>
    );
  return (
    <div className={`csv-box ${error ? 'has-error' : ''}`}>
      <label htmlFor={id}>{props.title}</label>
      <p className="hint">{props.hint}</p>
      <textarea
        id={id}
        className="mono"
        rows={6}
        value={text}
        onChange={(e) => setText(e.target.value)}
        aria-invalid={error !== null}
      />
      {error && (
        <div className="msg-error" role="alert">
          {error}
        </div>
      )}
      <div className="button-row">
        <button className="small primary" onClick={() => run(text)} disabled={text.trim() === ''}>
          Apply
        </button>
        <button
          className="small"
          onClick={async () => {
            try {
              const f = await platform.pickFile('csv');
              if (f) {
                setText(f.text);
                run(f.text);
              }
            } catch (e) {
              setError(errorText(e));
            }
          }}
        >
          Import file…
        </button>
        <button className="small" onClick={() => setOpen(false)}>
          Close
        </button>
      </div>
    </div>
  );
}
