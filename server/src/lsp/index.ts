/** The language server's public entry, for `offload-ledger serve` and the extension's bundle. */
export { startServer, type ServerOptions } from './server';
