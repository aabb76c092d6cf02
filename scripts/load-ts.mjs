// Loads a TypeScript module of this repository from a script: bundles it in memory with esbuild
// and evaluates it as CommonJS. Scripts use it to read the sources they generate from (the
// directive word lists, the settings schema) or share with the tests (the load generators).
import { build } from 'esbuild';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');

export async function loadTs(entry, external = []) {
  const file = join(ROOT, entry);
  const out = await build({ entryPoints: [file], bundle: true, write: false, format: 'cjs', platform: 'node', logLevel: 'silent', external });
  const mod = { exports: {} };
  new Function('module', 'exports', 'require', '__dirname', out.outputFiles[0].text)(mod, mod.exports, createRequire(file), dirname(file));
  return mod.exports;
}
