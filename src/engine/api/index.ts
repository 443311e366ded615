export * from './protocol.ts';
export * from './serveEngine.ts';
export * from './createEngineClient.ts';
