/** The shape the deal form needs before it can draw a deal (a deal from a file or typed as text may have any shape). */

const isRec = (v: unknown): v is Record<string, unknown> =>
  typeof v === 'object' && v !== null && !Array.isArray(v);
const isStr = (v: unknown): boolean => typeof v === 'string';

/**
 * Whether the form can draw this deal (a deal loaded as text or from a file may have any shape). Returns the first
 * reason it cannot, or null. The engine's check reports every problem with its field; this only protects the form.
 */
export function formShapeProblem(d: unknown): string | null {
  if (!isRec(d)) return 'the deal is not a JSON object';
  const optRec = (k: string): string | null =>
    d[k] === undefined || isRec(d[k]) ? null : `"${k}" must be an object`;
  const optArr = (k: string): string | null =>
    d[k] === undefined || Array.isArray(d[k]) ? null : `"${k}" must be a list`;
  for (const p of [
    optRec('underlyings'),
    optRec('parameters'),
    optRec('state'),
    optRec('schedules'),
    optArr('events'),
    optArr('exercise'),
    optArr('rates'),
  ])
    if (p) return p;
  for (const [k, u] of Object.entries((d['underlyings'] as Record<string, unknown>) ?? {}))
    if (!isRec(u) || (u['kind'] !== 'equity' && u['kind'] !== 'fx'))
      return `underlying "${k}" needs "kind": "equity" or "fx"`;
  for (const [k, sc] of Object.entries((d['schedules'] as Record<string, unknown>) ?? {}))
    if (!isRec(sc) || ('dates' in sc ? !Array.isArray(sc['dates']) : !('every' in sc)))
      return `schedule "${k}" needs "dates": [...] or "start", "end" and "every"`;
  for (const [i, e] of ((d['events'] as unknown[]) ?? []).entries()) {
    if (!isRec(e)) return `event ${i + 1} must be an object`;
    const pays = e['pay'] === undefined ? [] : Array.isArray(e['pay']) ? e['pay'] : [e['pay']];
    if (pays.some((x) => !isRec(x) || !isStr(x['amount'])))
      return `event ${i + 1}: every payment needs an "amount" formula (text)`;
    if (e['set'] !== undefined && (!isRec(e['set']) || Object.values(e['set']).some((x) => !isStr(x))))
      return `event ${i + 1}: "set" must map state names to formulas (text)`;
    if (e['when'] !== undefined && !isStr(e['when']))
      return `event ${i + 1}: "when" must be a formula (text)`;
  }
  for (const [i, x] of ((d['exercise'] as unknown[]) ?? []).entries())
    if (!isRec(x) || !isStr(x['amount'])) return `exercise right ${i + 1} needs an "amount" formula (text)`;
  return null;
}
