/**
 * Form fields that never lose what the user typed: invalid text is kept (in the draft, so it survives a
 * reload) and a message beside the field says what is wrong and how to fix it. Engine issues reach the
 * field whose path they name.
 */
import { createContext, useContext, useId, useState, type ReactNode } from 'react';
import type { FieldIssue } from '../../engine/errors.ts';
import { num, parseNumber } from './format.ts';

/** Raw texts the user typed that are not (yet) valid values, keyed by field path. */
export interface RawInputs {
  raw: Record<string, string>;
  setRaw(path: string, text: string | null): void;
}

export const RawContext = createContext<RawInputs>({ raw: {}, setRaw: () => {} });

/** Engine issues by field path (exact path match). */
export const IssueContext = createContext<Map<string, FieldIssue[]>>(new Map());

/** Groups issues by their field. */
export function issuesByField(issues: FieldIssue[]): Map<string, FieldIssue[]> {
  const m = new Map<string, FieldIssue[]>();
  for (const i of issues) m.set(i.field, [...(m.get(i.field) ?? []), i]);
  return m;
}

function FieldMessages(props: { id: string; local: string | null; issues: FieldIssue[]; extra?: ReactNode }) {
  if (!props.local && props.issues.length === 0 && !props.extra) return null;
  return (
    <div className="field-msg" id={props.id} role="alert">
      {props.local && <div className="msg-error">{props.local}</div>}
      {props.issues.map((i, k) => (
        <div key={k} className={i.severity === 'warning' ? 'msg-warn' : 'msg-error'}>
          {i.message}
        </div>
      ))}
      {props.extra}
    </div>
  );
}

/** Number rules checked on the spot, before the engine sees the value. */
export interface NumberRule {
  min?: number;
  /** Exclusive lower bound. */
  above?: number;
  max?: number;
  integer?: boolean;
}

function ruleMessage(v: number, r: NumberRule): string | null {
  if (r.integer && !Number.isInteger(v)) return 'must be a whole number';
  if (r.above !== undefined && !(v > r.above)) return `must be greater than ${num(r.above)}`;
  if (r.min !== undefined && v < r.min) return `must be at least ${num(r.min)}`;
  if (r.max !== undefined && v > r.max) return `must be at most ${num(r.max)}`;
  return null;
}

/** A number input. `display` turns the stored value into the text shown (e.g. a percentage). */
export function NumberField(props: {
  label: string;
  path: string;
  value: number | undefined;
  onCommit(v: number): void;
  rule?: NumberRule;
  hint?: string;
  /** Stored value → shown value (e.g. ×100 for percent) and back. */
  scale?: number;
  suffix?: string;
  compact?: boolean;
}) {
  const { raw, setRaw } = useContext(RawContext);
  const issues = useContext(IssueContext).get(props.path) ?? [];
  const msgId = useId();
  const inputId = useId();
  const scale = props.scale ?? 1;
  const text =
    raw[props.path] ??
    (props.value === undefined ? '' : String(Number((props.value * scale).toPrecision(12))));
  const parsed = parseNumber(text.replace(/%$/, ''));
  let local: string | null = null;
  if (raw[props.path] !== undefined) {
    if (parsed === null)
      local = `${props.label}: "${text}" is not a number${props.hint ? ` — ${props.hint}` : ''}`;
    else {
      const why = ruleMessage(parsed / scale, props.rule ?? {});
      if (why) local = `${props.label} ${why} (got ${text})`;
    }
  }
  const bad = local !== null || issues.some((i) => i.severity === 'error');
  return (
    <div className={`field ${props.compact ? 'compact' : ''} ${bad ? 'has-error' : ''}`}>
      <label htmlFor={inputId}>{props.label}</label>
      <span className="input-wrap">
        <input
          id={inputId}
          inputMode="decimal"
          value={text}
          aria-invalid={bad}
          aria-describedby={bad ? msgId : undefined}
          data-path={props.path}
          onChange={(e) => {
            const t = e.target.value;
            setRaw(props.path, t);
            const v = parseNumber(t);
            if (v !== null && ruleMessage(v / scale, props.rule ?? {}) === null) props.onCommit(v / scale);
          }}
          onBlur={() => {
            const t = raw[props.path];
            if (t === undefined) return;
            const v = parseNumber(t);
            if (v !== null && ruleMessage(v / scale, props.rule ?? {}) === null) setRaw(props.path, null);
          }}
        />
        {props.suffix && <span className="suffix">{props.suffix}</span>}
      </span>
      <FieldMessages id={msgId} local={local} issues={issues} />
    </div>
  );
}

/** A text input; `check` gives an on-the-spot message (null when fine). */
export function TextField(props: {
  label: string;
  path: string;
  value: string;
  onChange(v: string): void;
  check?: (v: string) => string | null;
  placeholder?: string;
  compact?: boolean;
  wide?: boolean;
  /** Also show the issues of the list items under this path (`path[0]`, `path[1]`...), named by position. */
  itemIssues?: boolean;
}) {
  const byField = useContext(IssueContext);
  const issues = [...(byField.get(props.path) ?? [])];
  if (props.itemIssues)
    for (const [f, list] of byField) {
      const m = f.startsWith(props.path + '[') ? /^\[(\d+)\]/.exec(f.slice(props.path.length)) : null;
      if (!m) continue;
      for (const i of list)
        issues.push({
          ...i,
          message: `item ${Number(m[1]) + 1}: ${i.message.startsWith(f + ' ') ? i.message.slice(f.length + 1) : i.message}`,
        });
    }
  const msgId = useId();
  const inputId = useId();
  const local = props.check ? props.check(props.value) : null;
  const bad = local !== null || issues.some((i) => i.severity === 'error');
  return (
    <div
      className={`field ${props.compact ? 'compact' : ''} ${props.wide ? 'wide' : ''} ${bad ? 'has-error' : ''}`}
    >
      <label htmlFor={inputId}>{props.label}</label>
      <input
        id={inputId}
        value={props.value}
        placeholder={props.placeholder}
        aria-invalid={bad}
        aria-describedby={bad ? msgId : undefined}
        data-path={props.path}
        onChange={(e) => props.onChange(e.target.value)}
      />
      <FieldMessages id={msgId} local={local} issues={issues} />
    </div>
  );
}

export function SelectField<T extends string>(props: {
  label: string;
  path: string;
  value: T;
  options: { value: T; label: string }[];
  onChange(v: T): void;
  compact?: boolean;
}) {
  const issues = useContext(IssueContext).get(props.path) ?? [];
  const id = useId();
  const msgId = useId();
  return (
    <div className={`field ${props.compact ? 'compact' : ''} ${issues.length ? 'has-error' : ''}`}>
      <label htmlFor={id}>{props.label}</label>
      <select
        id={id}
        value={props.value}
        data-path={props.path}
        onChange={(e) => props.onChange(e.target.value as T)}
      >
        {props.options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
      <FieldMessages id={msgId} local={null} issues={issues} />
    </div>
  );
}

export function CheckField(props: {
  label: string;
  path: string;
  value: boolean;
  onChange(v: boolean): void;
}) {
  const id = useId();
  return (
    <div className="field check">
      <input
        id={id}
        type="checkbox"
        checked={props.value}
        data-path={props.path}
        onChange={(e) => props.onChange(e.target.checked)}
      />
      <label htmlFor={id}>{props.label}</label>
    </div>
  );
}

/** Where an expression error sits in the text: [start, end) character range with its message. */
export interface ExpressionMark {
  start: number;
  end: number;
  message: string;
}

/**
 * A payoff expression input. Errors from the engine's check are shown in place: the offending characters are
 * underlined in a copy of the text under the input, with the message beside it.
 */
export function ExpressionField(props: {
  label: string;
  path: string;
  value: string;
  onChange(v: string): void;
  marks: ExpressionMark[];
  placeholder?: string;
  checking?: boolean;
}) {
  const issues = (useContext(IssueContext).get(props.path) ?? []).filter(
    (i) => !props.marks.some((m) => i.message.includes(m.message)),
  );
  const id = useId();
  const msgId = useId();
  const [focused, setFocused] = useState(false);
  const bad = props.marks.length > 0 || issues.some((i) => i.severity === 'error');
  const segments: ReactNode[] = [];
  if (props.marks.length > 0) {
    const sorted = [...props.marks].sort((a, b) => a.start - b.start);
    let at = 0;
    sorted.forEach((m, k) => {
      const s = Math.max(at, Math.min(m.start, props.value.length));
      const e = Math.max(s, Math.min(m.end, props.value.length));
      if (s > at) segments.push(<span key={`t${k}`}>{props.value.slice(at, s)}</span>);
      segments.push(
        <mark key={`m${k}`} title={m.message}>
          {e > s ? props.value.slice(s, e) : '\u2002'}
        </mark>,
      );
      at = e;
    });
    if (at < props.value.length) segments.push(<span key="rest">{props.value.slice(at)}</span>);
  }
  return (
    <div className={`field expr ${bad ? 'has-error' : ''} ${focused ? 'focused' : ''}`}>
      <label htmlFor={id}>{props.label}</label>
      <input
        id={id}
        className="mono"
        spellCheck={false}
        autoComplete="off"
        value={props.value}
        placeholder={props.placeholder}
        aria-invalid={bad}
        aria-describedby={bad ? msgId : undefined}
        data-path={props.path}
        onFocus={() => setFocused(true)}
        onBlur={() => setFocused(false)}
        onChange={(e) => props.onChange(e.target.value)}
      />
      {props.marks.length > 0 && (
        <div className="expr-echo mono" aria-hidden="true">
          {segments}
        </div>
      )}
      {(props.marks.length > 0 || issues.length > 0) && (
        <div className="field-msg" id={msgId} role="alert">
          {props.marks.map((m, k) => (
            <div key={k} className="msg-error">
              {/^character \d+/.test(m.message) ? '' : `at character ${m.start + 1}: `}
              {m.message}
            </div>
          ))}
          {issues.map((i, k) => (
            <div key={`i${k}`} className={i.severity === 'warning' ? 'msg-warn' : 'msg-error'}>
              {i.message}
            </div>
          ))}
        </div>
      )}
    </div>
  );
}
