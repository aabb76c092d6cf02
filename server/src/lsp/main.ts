/** Bundle entry of the language server (server/dist/lsp.js): `node lsp.js --stdio` or `--node-ipc`. */
import { startServer } from './server';

startServer();
