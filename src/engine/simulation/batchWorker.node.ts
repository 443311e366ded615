/** Entry of a worker thread that serves batches (started through worker-boot.node.mjs). */
import { parentPort } from 'node:worker_threads';
import { makeBatchServer, type ToWorker } from './batchServer.ts';

if (!parentPort) throw new Error('batchWorker.node.ts must run in a worker thread');
const port = parentPort;
const handle = makeBatchServer((msg) => port.postMessage(msg));
port.on('message', (msg: ToWorker) => void handle(msg));
