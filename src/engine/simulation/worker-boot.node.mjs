// Worker thread boot: registers the TypeScript loader, then imports the TypeScript entry passed as the worker's
// first argument (Worker option `argv`).
import { register } from 'tsx/esm/api';

register();
await import(process.argv[2]);
