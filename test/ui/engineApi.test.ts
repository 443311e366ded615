import { describe, it, expect, afterEach } from 'vitest';
import { MessageChannel, type MessagePort } from 'node:worker_threads';
import {
  createEngineClient,
  serveEngine,
  isApiError,
  API_ERROR_CODES,
  PROTOCOL_VERSION,
  type EngineHandlers,
  type MessageEndpoint,
} from '../../src/engine/api/index.ts';
import { engineHandlers } from '../../src/engine/api/engineHandlers.ts';
import { EngineError, issue } from '../../src/engine/errors.ts';

const open: MessagePort[] = [];
afterEach(() => {
  for (const p of open.splice(0)) p.close();
});

/** A connected client/server pair over a real MessageChannel (structured clone, like a Web Worker). */
function pair(handlers: Partial<EngineHandlers>, progressIntervalMs = 0) {
  const ch = new MessageChannel();
  open.push(ch.port1, ch.port2);
  const server = ch.port1 as unknown as MessageEndpoint;
  const clientEnd = ch.port2 as unknown as MessageEndpoint;
  const stop = serveEngine(server, handlers, { progressIntervalMs });
  const client = createEngineClient(clientEnd);
  return { client, stop, raw: ch.port2 };
}

async function rejection(p: Promise<unknown>): Promise<unknown> {
  try {
    await p;
  } catch (e) {
    return e;
  }
  throw new Error('expected the call to reject');
}

describe('engine protocol', () => {
  it('returns a method’s result across a structured-clone boundary', async () => {
    const { client } = pair(engineHandlers);
    const info = await client.call('engine.info', {});
    expect(info.protocol).toBe(PROTOCOL_VERSION);
    expect(info.methods).toContain('deal.check');
  });
  it('answers an unserved method with E_UNKNOWN_METHOD', async () => {
    const { client } = pair({});
    const e = await rejection(client.call('engine.info', {}));
    expect(isApiError(e) && e.code).toBe(API_ERROR_CODES.unknownMethod);
  });
  it('carries engine errors as plain objects with their code and field issues', async () => {
    const { client } = pair({
      'engine.info': () => {
        const i = issue('E_NOT_POSITIVE', 'settings.paths', 'must be > 0', -5, 'give a path count');
        throw new EngineError(i.code, i.message, [i]);
      },
    });
    const e = await rejection(client.call('engine.info', {}));
    expect(isApiError(e)).toBe(true);
    if (!isApiError(e)) return;
    expect(e.code).toBe('E_NOT_POSITIVE');
    expect(e.issues[0]!.field).toBe('settings.paths');
    expect(e.message).toContain('settings.paths');
  });
  it('an unexpected exception becomes E_INTERNAL with its message', async () => {
    const { client } = pair({
      'engine.info': () => {
        throw new TypeError('boom');
      },
    });
    const e = await rejection(client.call('engine.info', {}));
    expect(e).toEqual({ code: 'E_INTERNAL', message: 'boom', issues: [] });
  });
  it('cancelling a call aborts the handler’s signal and rejects with E_CANCELLED', async () => {
    let sawAbort = false;
    const { client } = pair({
      'engine.info': (_a, ctx) =>
        new Promise((_resolve, reject) => {
          ctx.signal.addEventListener('abort', () => {
            sawAbort = true;
            reject(new Error('stopped'));
          });
        }),
    });
    const ac = new AbortController();
    const p = client.call('engine.info', {}, { signal: ac.signal });
    setTimeout(() => ac.abort(), 10);
    const e = await rejection(p);
    expect(isApiError(e) && e.code).toBe(API_ERROR_CODES.cancelled);
    expect(sawAbort).toBe(true);
  });
  it('delivers progress in order, clamped to [0, 1], before the result', async () => {
    const { client } = pair({
      'engine.info': async (_a, ctx) => {
        for (const f of [0.25, 0.5, 2]) {
          ctx.progress({ fraction: f, stage: 'simulate' });
          await new Promise((r) => setTimeout(r, 1));
        }
        return { protocol: PROTOCOL_VERSION, methods: [] };
      },
    });
    const seen: number[] = [];
    await client.call('engine.info', {}, { onProgress: (p) => seen.push(p.fraction) });
    expect(seen).toEqual([0.25, 0.5, 1]);
  });
  it('throttles progress messages to the stated interval', async () => {
    let t = 0;
    const ch = new MessageChannel();
    open.push(ch.port1, ch.port2);
    serveEngine(
      ch.port1 as unknown as MessageEndpoint,
      {
        'engine.info': (_a, ctx) => {
          for (let i = 0; i < 100; i++) {
            t += 1; // 1 ms per step
            ctx.progress({ fraction: i / 100, stage: 's' });
          }
          return { protocol: PROTOCOL_VERSION, methods: [] };
        },
      },
      { progressIntervalMs: 20, now: () => t },
    );
    const client = createEngineClient(ch.port2 as unknown as MessageEndpoint);
    let n = 0;
    await client.call('engine.info', {}, { onProgress: () => n++ });
    expect(n).toBe(5);
  });
  it('refuses a message of another protocol version', async () => {
    const ch = new MessageChannel();
    open.push(ch.port1, ch.port2);
    serveEngine(ch.port1 as unknown as MessageEndpoint, engineHandlers);
    const reply = new Promise<any>((r) => ch.port2.once('message', r));
    ch.port2.postMessage({ v: 99, kind: 'request', id: 7, method: 'engine.info', args: {} });
    const m = await reply;
    expect(m.kind).toBe('error');
    expect(m.error.code).toBe(API_ERROR_CODES.badRequest);
  });
  it('closing the client rejects pending calls with E_WORKER_FAILED', async () => {
    const { client } = pair({ 'engine.info': () => new Promise(() => {}) });
    const p = client.call('engine.info', {});
    client.close('the engine worker stopped');
    const e = await rejection(p);
    expect(isApiError(e) && e.code).toBe(API_ERROR_CODES.workerFailed);
  });
});

describe('engine methods through the protocol', () => {
  it('a correlation matrix that is not PSD is refused with the nearest valid matrix offered', async () => {
    const { client } = pair(engineHandlers);
    // [[1,1,0],[1,1,1],[0,1,1]]: nearest correlation matrix with off-diagonals 0.7607 and 0.1573 (4 decimals),
    // N. J. Higham, "Computing the nearest correlation matrix — a problem from finance", IMA J. Numer. Anal. 22
    // (2002); value as quoted in test sets of open implementations — from memory.
    const r = await client.call('market.checkCorrelation', {
      names: ['eq:ALDR', 'eq:BRIX', 'rate:DOM'],
      matrix: [
        [1, 1, 0],
        [1, 1, 1],
        [0, 1, 1],
      ],
    });
    expect(r.valid).toBe(false);
    expect(r.minEigenvalue).toBeLessThan(0);
    expect(r.issues.map((i) => i.code)).toContain('E_NOT_PSD');
    const n = r.nearest!.matrix;
    const want = [
      [1, 0.7607, 0.1573],
      [0.7607, 1, 0.7607],
      [0.1573, 0.7607, 1],
    ];
    for (let i = 0; i < 3; i++)
      for (let j = 0; j < 3; j++)
        expect(
          Math.abs(n[i]![j]! - want[i]![j]!),
          `cell ${i},${j}: got ${n[i]![j]}, want ${want[i]![j]} ± 5e-5`,
        ).toBeLessThan(5e-5);
  });
  it('names the cell of an asymmetric or out-of-range correlation', async () => {
    const { client } = pair(engineHandlers);
    const r = await client.call('market.checkCorrelation', {
      names: ['a', 'b'],
      matrix: [
        [1, 0.3],
        [0.2, 1],
      ],
    });
    expect(r.valid).toBe(false);
    expect(r.issues[0]!.field).toBe('correlation.matrix[0][1]');
    const r2 = await client.call('market.checkCorrelation', {
      names: ['a', 'b'],
      matrix: [
        [1, 1.5],
        [1.5, 1],
      ],
    });
    expect(r2.issues.map((i) => i.code)).toContain('E_CORRELATION_RANGE');
  });
  it('a valid matrix passes with no nearest matrix offered', async () => {
    const { client } = pair(engineHandlers);
    const r = await client.call('market.checkCorrelation', {
      names: ['a', 'b'],
      matrix: [
        [1, -0.3],
        [-0.3, 1],
      ],
    });
    expect(r).toMatchObject({ valid: true, nearest: null, issues: [] });
  });
  it('checks a payoff expression and reports the position of an unknown name', async () => {
    const { client } = pair(engineHandlers);
    const text = 'max(ALDR / K - 1, 0) + FOO';
    const r = await client.call('deal.checkExpression', {
      text,
      context: { field: 'deal.events[0].pay[0].amount', symbols: { ALDR: 'equity', K: 'parameter' } },
    });
    expect(r.errors.length).toBeGreaterThan(0);
    const e = r.errors[0]!;
    expect(text.slice(e.start, e.end)).toBe('FOO');
  });
  it('refuses a study file that is not JSON, naming the problem', async () => {
    const { client } = pair(engineHandlers);
    const e = await rejection(client.call('study.open', { text: '{"format": ' }));
    expect(isApiError(e) && e.code).toBe('E_STUDY_JSON');
    const e2 = await rejection(client.call('study.open', { text: '{"format":"something-else"}' }));
    expect(isApiError(e2) && e2.code).toBe('E_STUDY_FORMAT');
  });
});

describe('deal and market checks through the protocol', () => {
  it('a market snapshot with a negative spot is refused with the field named', async () => {
    const { client } = pair(engineHandlers);
    const snapshot = {
      schema: 'factor-triage/market@1',
      date: '2026-11-23',
      domestic: 'DOM',
      curves: { DOM: { currency: 'DOM', times: [1, 2], zeroRates: [0.02, 0.025] } },
      equities: {
        ALDR: {
          currency: 'DOM',
          spot: -5,
          divYield: 0,
          vols: { expiries: [1], moneyness: [1], vols: [[0.2]] },
        },
      },
      correlation: { names: ['eq:ALDR'], matrix: [[1]] },
    };
    const r = await client.call('market.check', { snapshot });
    expect(r.valid).toBe(false);
    expect(r.issues.some((i) => i.field.includes('equities.ALDR.spot'))).toBe(true);
  });
  it('a deal that is not an object comes back as issues, not an exception', async () => {
    const { client } = pair(engineHandlers);
    const r = await client.call('deal.check', { deal: 42 });
    expect(r.issues.length).toBeGreaterThan(0);
    expect(r.compiled).toBeUndefined();
    expect(r.analysis).toBeNull();
  });
});

describe('studies through the protocol', () => {
  it('a study runs with progress and comes back as a plain, sealed study', async () => {
    const { readFileSync } = await import('node:fs');
    const deal = JSON.parse(readFileSync('samples/deals/european-call.json', 'utf8'));
    const market = JSON.parse(readFileSync('samples/market/demo-market.json', 'utf8'));
    const { DEFAULT_SETTINGS } = await import('../../src/engine/study/index.ts');
    const { client } = pair(engineHandlers, 0);
    const stages: string[] = [];
    const s = await client.call(
      'study.run',
      {
        input: {
          deal,
          markets: [market],
          settings: { ...DEFAULT_SETTINGS, paths: 2048, firstPaths: 1024, batchSize: 1024 },
        },
      },
      { onProgress: (p) => stages.push(p.stage) },
    );
    expect(s.format).toBe('factor-triage/study@1');
    expect(s.hash).toMatch(/^[0-9a-f]{64}$/);
    expect(s.verdicts.length).toBeGreaterThan(0);
    expect(stages.length).toBeGreaterThan(0);
    const v = await client.call('study.verify', { study: s });
    expect(v, v.message).toMatchObject({ identical: true, hashOk: true, difference: null });
  });
  it('a study run cancelled after its first progress report rejects with E_CANCELLED', async () => {
    const { readFileSync } = await import('node:fs');
    const deal = JSON.parse(readFileSync('samples/deals/autocallable-memory.json', 'utf8'));
    const market = JSON.parse(readFileSync('samples/market/demo-market.json', 'utf8'));
    const { DEFAULT_SETTINGS } = await import('../../src/engine/study/index.ts');
    const { client } = pair(engineHandlers, 0);
    const ac = new AbortController();
    const t0 = Date.now();
    const e = await rejection(
      client.call(
        'study.run',
        {
          input: {
            deal,
            markets: [market],
            settings: { ...DEFAULT_SETTINGS, paths: 1 << 20, firstPaths: 4096, batchSize: 1024 },
          },
        },
        { signal: ac.signal, onProgress: (p) => p.stage !== 'calibration' && ac.abort() },
      ),
    );
    expect(isApiError(e) && e.code).toBe(API_ERROR_CODES.cancelled);
    expect(Date.now() - t0).toBeLessThan(30_000);
  });
});

describe('new-document settings', () => {
  it('equal the engine’s defaults (the UI keeps a copy so its thread does not load the engine)', async () => {
    const { DEFAULT_SETTINGS: engine } = await import('../../src/engine/study/index.ts');
    const { DEFAULT_SETTINGS: ui } = await import('../../src/ui/state/document.ts');
    expect(ui).toEqual(engine);
  });
});

describe('calibration stability through the protocol', () => {
  it('reports one parameter path per model parameter over the dates of the series, in date order', async () => {
    const { readFileSync, readdirSync } = await import('node:fs');
    const dir = 'samples/market/series';
    const snapshots = readdirSync(dir)
      .sort()
      .reverse()
      .map((f) => JSON.parse(readFileSync(`${dir}/${f}`, 'utf8')));
    const { client } = pair(engineHandlers);
    const r = await client.call('calibration.stability', {
      snapshots,
      equities: ['ALDR'],
      currencies: ['DOM'],
    });
    expect(r.dates).toEqual([...r.dates].sort());
    expect(r.paths.map((p) => `${p.model}.${p.parameter}`)).toEqual(
      expect.arrayContaining(['heston:ALDR.v0', 'heston:ALDR.rho', 'hull-white:DOM.a']),
    );
    for (const p of r.paths) expect(p.values).toHaveLength(snapshots.length);
  });
  it('refuses a single snapshot with the reason', async () => {
    const { readFileSync } = await import('node:fs');
    const m = JSON.parse(readFileSync('samples/market/demo-market.json', 'utf8'));
    const { client } = pair(engineHandlers);
    const e = await rejection(
      client.call('calibration.stability', { snapshots: [m], equities: ['ALDR'], currencies: [] }),
    );
    expect(isApiError(e) && e.code).toBe('E_TOO_FEW_SNAPSHOTS');
  });
});

describe('deal review through the protocol', () => {
  it('a valid deal comes back compiled, analysed, and with the rules’ finding for every factor group', async () => {
    const { readFileSync } = await import('node:fs');
    const deal = JSON.parse(readFileSync('samples/deals/european-call.json', 'utf8'));
    const { client } = pair(engineHandlers);
    const r = await client.call('deal.check', { deal });
    expect(r.issues.filter((i) => i.severity === 'error')).toEqual([]);
    expect(r.analysis?.equities.map((e) => e.id)).toEqual(['ALDR']);
    expect(r.rules?.factors.map((f) => f.factor).sort()).toEqual(['domesticRate', 'foreignRate', 'stochVol']);
  });
});

describe('request shapes', () => {
  it('a request with a missing or mistyped argument is refused with E_BAD_REQUEST naming it', async () => {
    const { client } = pair(engineHandlers);
    const send = client.call as unknown as (m: string, a: unknown) => Promise<unknown>;
    const e1 = await rejection(send('deal.checkExpression', { text: 'max(1, 2)' }));
    expect(isApiError(e1) && e1.code).toBe(API_ERROR_CODES.badRequest);
    expect(isApiError(e1) && e1.issues[0]!.field).toBe('deal.checkExpression.context');
    const e2 = await rejection(send('market.checkCorrelation', { names: 'eq:ALDR', matrix: [[1]] }));
    expect(isApiError(e2) && e2.message).toMatch(/names must be a list/);
    const e3 = await rejection(send('study.open', 'not an object'));
    expect(isApiError(e3) && e3.code).toBe(API_ERROR_CODES.badRequest);
  });
});
