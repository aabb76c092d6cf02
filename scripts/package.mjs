// Builds the VS Code extension package (.vsix) with @vscode/vsce, offline.
//
// The extension is staged in dist/vsix/ with exactly what it runs: the manifest, the bundled
// client and server (esbuild), the analysis worker, the CLI (for `calibrate`), the TextMate
// grammars, the finding-code pages the diagnostics link to, and the tree-sitter runtime and
// grammar .wasm files in server/node_modules/, where the bundled server's grammar loader
// (server/src/grammars.ts, require.resolve from server/dist/) finds them.
//
// Usage: npm run package  →  dist/offload-ledger-<version>.vsix
//        node scripts/package.mjs --no-build --out-dir <dir>   (tests: the bundles are built, and
//        each test stages in its own folder so parallel runs never share files)
import { execFileSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const args = process.argv.slice(2);
const outDir = args.includes('--out-dir') ? args[args.indexOf('--out-dir') + 1] : join(root, 'dist');
const stage = join(outDir, 'vsix');
const require = createRequire(join(root, 'server', 'package.json'));

if (!args.includes('--no-build')) execFileSync(process.execPath, [join(root, 'scripts', 'build.mjs')], { stdio: 'inherit' });

rmSync(stage, { recursive: true, force: true });
mkdirSync(stage, { recursive: true });
const copy = (from, to = from) => {
  mkdirSync(dirname(join(stage, to)), { recursive: true });
  cpSync(join(root, from), join(stage, to), { recursive: true });
};

// The manifest without what only the repository needs (scripts, workspaces, devDependencies).
const pkg = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8'));
for (const k of ['scripts', 'workspaces', 'devDependencies', 'private']) delete pkg[k];
writeFileSync(join(stage, 'package.json'), JSON.stringify(pkg, null, 2) + '\n');

copy('client/README.md', 'README.md');
copy('.vscodeignore');
copy('client/dist/extension.js');
for (const f of ['lsp.js', 'lsp-worker.js', 'cli.js']) copy(`server/dist/${f}`);
for (const f of ['offload-ledger.c.tmLanguage.json', 'offload-ledger.fortran.tmLanguage.json', 'PROVENANCE.md']) copy(`grammars/${f}`);
copy('docs/lsp/codes.md');
copy('docs/findings.md');

// Only the files the grammar loader and web-tree-sitter read at run time, with their licences.
const runtime = {
  'web-tree-sitter': ['package.json', 'tree-sitter.cjs', 'tree-sitter.wasm', 'LICENSE'],
  'tree-sitter-c': ['package.json', 'tree-sitter-c.wasm', 'LICENSE'],
  'tree-sitter-cpp': ['package.json', 'tree-sitter-cpp.wasm', 'LICENSE'],
};
// Package folders are found by Node's lookup paths: web-tree-sitter's `exports` hides its package.json from require.resolve.
const packageDir = (name) => require.resolve.paths(name).map((p) => join(p, name)).find((d) => existsSync(join(d, 'package.json')));
for (const [name, files] of Object.entries(runtime)) {
  const dir = packageDir(name);
  for (const f of files) {
    const to = join(stage, 'server', 'node_modules', name, f);
    mkdirSync(dirname(to), { recursive: true });
    if (existsSync(join(dir, f))) cpSync(join(dir, f), to);
  }
}

const out = join(outDir, `${pkg.name}-${pkg.version}.vsix`);
const vsce = join(packageDir('@vscode/vsce'), 'vsce');
// Dependencies are bundled, so vsce must not collect node_modules; stdin is closed so that no prompt can wait.
execFileSync(process.execPath, [vsce, 'package', '--no-dependencies', '--skip-license', '--allow-missing-repository', '--out', out], {
  cwd: stage,
  stdio: ['ignore', 'inherit', 'inherit'],
});
console.log(`package: ${out}`);
