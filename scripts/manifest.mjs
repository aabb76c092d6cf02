// Writes the settings part of the extension manifest (package.json `contributes.configuration`)
// from the one settings schema, server/src/settings/schema.ts. tests/settings.test.ts fails when
// package.json and the schema differ, and names this script as the fix.
//
// Usage: node scripts/manifest.mjs [--check]
import { readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadTs } from './load-ts.mjs';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const configuration = (await loadTs('server/src/settings/schema.ts')).contributedConfiguration();

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
