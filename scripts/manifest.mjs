// Writes the settings part of the extension manifest (package.json `contributes.configuration`)
// from the one settings schema, server/src/settings/schema.ts. tests/settings.test.ts fails when
// package.json and the schema differ, and names this script as the fix.
//
// Usage: node scripts/manifest.mjs [--check]
import { build } from 'esbuild';
import { readFileSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const out = await build({
  entryPoints: [join(root, 'server/src/settings/schema.ts')],
  bundle: true,
  write: false,
  format: 'cjs',
  platform: 'node',
  logLevel: 'silent',
});
const mod = { exports: {} };
new Function('module', 'exports', 'require', out.outputFiles[0].text)(mod, mod.exports, createRequire(import.meta.url));
const configuration = mod.exports.contributedConfiguration();

const path = join(root, 'package.json');
const pkg = JSON.parse(readFileSync(path, 'utf8'));
const same = JSON.stringify(pkg.contributes?.configuration) === JSON.stringify(configuration);
if (process.argv.includes('--check')) {
  console.log(same ? 'manifest: configuration up to date' : 'manifest: configuration differs from the schema; run `npm run manifest`');
  process.exit(same ? 0 : 1);
}
pkg.contributes = { ...pkg.contributes, configuration };
writeFileSync(path, JSON.stringify(pkg, null, 2) + '\n');
console.log(`manifest: ${Object.keys(configuration.properties).length} settings written to package.json`);
