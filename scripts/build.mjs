// Bundles the CLI, the language server (and its analysis worker) and the VS Code client with
// esbuild, and generates the TextMate injection grammars.
// Runs from `npm install` (prepare) so that `npx offload-ledger` works from a fresh clone.
import { build } from 'esbuild';
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { writeGrammars } from './grammars.mjs';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const entry = join(root, 'server/src/cli/main.ts');
if (!existsSync(entry)) {
  console.log('build: nothing to bundle yet');
  process.exit(0);
}

// Vega's canvas module looks for the optional node-canvas package with a top-level await, which a
// CommonJS bundle cannot hold. The planning report renders SVG only, which needs no canvas, so the
// bundles take the module's browser build (no canvas in Node: Vega then estimates text widths).
const requireServer = createRequire(join(root, 'server', 'package.json'));
const vegaCanvas = join(dirname(requireServer.resolve('vega-canvas')), 'vega-canvas.browser.js');
const alias = { 'vega-canvas': vegaCanvas };

const serverEntries = {
  cli: entry,
  api: join(root, 'server/src/api.ts'),
  // The language server the extension starts over IPC (`node lsp.js --node-ipc`) and editors over stdio.
  lsp: join(root, 'server/src/lsp/main.ts'),
  // The analysis worker thread; the server finds it beside its own bundle.
  'lsp-worker': join(root, 'server/src/lsp/analysis/workerMain.ts'),
};

await build({
  entryPoints: serverEntries,
  outdir: join(root, 'server/dist'),
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'cjs',
  sourcemap: true,
  // The grammar loader resolves .wasm files from the installed npm packages at run time.
  external: ['web-tree-sitter', 'tree-sitter-c', 'tree-sitter-cpp'],
  alias,
  // The sources use import.meta.url (ESM); the CommonJS bundle derives it from __filename.
  define: { 'import.meta.url': 'importMetaUrl' },
  banner: { js: "const importMetaUrl = require('url').pathToFileURL(__filename).href;" },
  logLevel: 'warning',
});

// The client runs inside VS Code's extension host, which provides the `vscode` module.
await build({
  entryPoints: { extension: join(root, 'client/src/extension.ts') },
  outdir: join(root, 'client/dist'),
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'cjs',
  sourcemap: true,
  external: ['vscode'],
  alias,
  logLevel: 'warning',
});

const grammars = await writeGrammars(root);
console.log(`build: server/dist/{cli,api,lsp,lsp-worker}.js, client/dist/extension.js, ${grammars.length} grammars`);
