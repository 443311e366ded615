/**
 * The engine's Web Worker: serves the protocol (src/engine/api) off the UI thread. Adds `report.render`,
 * which lives in src/report (the engine itself does not depend on the report).
 */
import { serveEngine, type EngineHandlers, type MessageEndpoint } from '../../engine/api/index.ts';
import { engineHandlers } from '../../engine/api/engineHandlers.ts';
import { renderReport } from '../../report/index.ts';

const handlers: Partial<EngineHandlers> = {
  ...engineHandlers,
  'report.render': ({ study }) => ({ html: renderReport(study) }),
};

serveEngine(self as unknown as MessageEndpoint, handlers);
