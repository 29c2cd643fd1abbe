/**
 * Entry of the bundled language server (dist/server.js): `node dist/server.js --stdio` or `--node-ipc`.
 * The same script is the worker thread's (offload.ts): there it runs jobs instead of the server.
 */
import { isMainThread } from 'worker_threads';
import { startServer } from './server';
import { runWorker } from './worker';

if (isMainThread) startServer();
else runWorker();
