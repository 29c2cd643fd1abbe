/** Entry of the bundled language server (dist/server.js): `node dist/server.js --stdio` or `--node-ipc`. */
import { startServer } from './server';

startServer();
