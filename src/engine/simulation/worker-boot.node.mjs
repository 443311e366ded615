// Worker thread boot: registers the TypeScript loader, then imports the TypeScript entry named in workerData.
import { register } from 'tsx/esm/api';
import { workerData } from 'node:worker_threads';

register();
await import(workerData.entry);
