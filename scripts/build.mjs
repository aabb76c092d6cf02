// Bundles the CLI (and, later, the language server and client) with esbuild.
// Runs from `npm install` (prepare) so that `npx offload-ledger` works from a fresh clone.
import { build } from 'esbuild';
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const entry = join(root, 'server/src/cli/main.ts');
if (!existsSync(entry)) {
  console.log('build: nothing to bundle yet');
  process.exit(0);
}
await build({
  entryPoints: { cli: entry, api: join(root, 'server/src/api.ts') },
  outdir: join(root, 'server/dist'),
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'cjs',
  sourcemap: true,
  // The grammar loader resolves .wasm files from the installed npm packages at run time.
  external: ['web-tree-sitter', 'tree-sitter-c', 'tree-sitter-cpp'],
  // The sources use import.meta.url (ESM); the CommonJS bundle derives it from __filename.
  define: { 'import.meta.url': 'importMetaUrl' },
  banner: { js: "const importMetaUrl = require('url').pathToFileURL(__filename).href;" },
  logLevel: 'warning',
});
console.log('build: server/dist/cli.js, server/dist/api.js');
