/** Shared test helpers: one analysis entry, the report schema validator, the built CLI. */
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import Ajv2020 from 'ajv/dist/2020';
import { analyzeSource, type FileAnalysis, type PreprocessSettings } from '../server/src/core/analyze';
import { readHeader } from '../server/src/host/files';
import { languageOfPath } from '../server/src/core/language';
import type { MachineProfile } from '../server/src/core/machine/profiles';
import { loadGrammars, type Grammars } from '../server/src/grammars';

export const ROOT = join(__dirname, '..');
export const SCHEMA_PATH = join(ROOT, '..', 'shared', 'contracts', 'report.schema.json');
/** The contract lives in the shared folder; the repository keeps a copy for clean clones. */
export const SCHEMA_COPY = join(ROOT, 'server', 'schema', 'report.schema.json');

let grammars: Grammars | undefined;
export async function grammarsForTests(): Promise<Grammars> {
  grammars ??= await loadGrammars();
  return grammars;
}

export async function analyzeText(
  text: string, path = 'test.c', bindings?: Record<string, number>, cacheBytes?: number, profile?: MachineProfile, settings: PreprocessSettings = {},
): Promise<FileAnalysis> {
  const g = await grammarsForTests();
  // Headers are read from disk as the CLI reads them, so fixtures may include their own.
  return analyzeSource({ path, text, language: languageOfPath(path) ?? 'c' }, { ...g, readInclude: readHeader }, {
    ...settings, bindings: new Map(Object.entries(bindings ?? {})), cacheBytes, profile,
  });
}

export async function analyzeFile(path: string): Promise<FileAnalysis> {
  return analyzeText(readFileSync(path, 'utf8'), path);
}

export function schemaValidator(): (data: unknown) => { ok: boolean; errors: string } {
  const schema = JSON.parse(readFileSync(SCHEMA_COPY, 'utf8'));
  const ajv = new Ajv2020({ allErrors: true, strict: false });
  const validate = ajv.compile(schema);
  return (data) => {
    const ok = validate(data) as boolean;
    return { ok, errors: ok ? '' : ajv.errorsText(validate.errors) };
  };
}

export interface CliResult { status: number; stdout: string; stderr: string }

/** Runs the bundled CLI exactly as a user would (node server/bin/offload-ledger.js …). */
export function runCli(args: string[], cwd = ROOT): CliResult {
  const r = spawnSync(process.execPath, [join(ROOT, 'server', 'bin', 'offload-ledger.js'), ...args], { cwd, encoding: 'utf8', timeout: 60_000 });
  return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}
