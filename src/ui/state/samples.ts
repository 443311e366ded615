/**
 * The samples bundled with the app: deal templates, the demo market (and its series of dates) and the
 * demo study opened on first start. Loaded lazily so the first screen does not wait for all of them.
 */
import type { DealInput } from '../../engine/deal/types.ts';
import type { MarketSnapshot } from '../../engine/market/types.ts';

const dealFiles = import.meta.glob<DealInput>('../../../samples/deals/*.json', {
  eager: true,
  import: 'default',
});
const marketFiles = import.meta.glob<MarketSnapshot>('../../../samples/market/*.json', {
  eager: true,
  import: 'default',
});
const seriesFiles = import.meta.glob<MarketSnapshot>('../../../samples/market/series/*.json', {
  eager: true,
  import: 'default',
});
const studyFiles = import.meta.glob<string>('../../../samples/studies/*.study.json', {
  query: '?raw',
  import: 'default',
});

export interface DealTemplate {
  id: string;
  deal: DealInput;
}

function baseName(p: string): string {
  return p.slice(p.lastIndexOf('/') + 1).replace(/\.json$/, '');
}

/** Deal templates, by file name. */
export const DEAL_TEMPLATES: DealTemplate[] = Object.entries(dealFiles)
  .map(([p, deal]) => ({ id: baseName(p), deal }))
  .sort((a, b) => a.id.localeCompare(b.id));

/** The demo market snapshot (null if the build has none). */
export const DEMO_MARKET: MarketSnapshot | null =
  Object.entries(marketFiles).find(([p]) => p.endsWith('/demo-market.json'))?.[1] ??
  Object.values(marketFiles)[0] ??
  null;

/** Further dates of the demo market, oldest first. */
export const DEMO_SERIES: MarketSnapshot[] = Object.entries(seriesFiles)
  .sort(([a], [b]) => a.localeCompare(b))
  .map(([, m]) => m);

/** Text of the bundled demo study, or null when this build has none. */
export async function loadDemoStudyText(): Promise<{ name: string; text: string } | null> {
  const entry =
    Object.entries(studyFiles).find(([p]) => p.endsWith('/demo.study.json')) ?? Object.entries(studyFiles)[0];
  if (!entry) return null;
  return { name: baseName(entry[0]) + '.json', text: await entry[1]() };
}
