/** The verdict mark: a shape and a word, so it reads without colour too. */
export type VerdictKind = 'keep' | 'drop' | 'undecided' | 'required' | 'notNeeded';

const WORD: Record<VerdictKind, string> = {
  keep: 'Keep',
  drop: 'Drop',
  undecided: 'Undecided',
  required: 'Required',
  notNeeded: 'Not needed',
};

export function VerdictMark(props: { verdict: string; large?: boolean }) {
  const v = (props.verdict in WORD ? props.verdict : 'undecided') as VerdictKind;
  const s = props.large ? 22 : 14;
  return (
    <span className={`verdict verdict-${v} ${props.large ? 'large' : ''}`} data-verdict={v}>
      <svg width={s} height={s} viewBox="0 0 16 16" aria-hidden="true">
        {v === 'keep' && <rect x="2" y="2" width="12" height="12" rx="2" className="vm-fill" />}
        {v === 'drop' && <rect x="2.5" y="2.5" width="11" height="11" rx="2" className="vm-line" />}
        {v === 'undecided' && (
          <>
            <rect x="2.5" y="2.5" width="11" height="11" rx="2" className="vm-line" />
            <path d="M2.5 13.5 L13.5 2.5 L13.5 13.5 Z" className="vm-fill" />
          </>
        )}
        {v === 'required' && <path d="M8 1.5 L14.5 8 L8 14.5 L1.5 8 Z" className="vm-fill" />}
        {v === 'notNeeded' && <path d="M3 8 H13" className="vm-line" strokeWidth="2.5" />}
      </svg>
      {WORD[v]}
    </span>
  );
}
