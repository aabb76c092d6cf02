/**
 * `offload-ledger` command-line entry. Exit status: 0 when no finding has severity error,
 * 1 otherwise, 2 on usage or input errors (with a one-line message on stderr).
 */
import { analyzeSource, type FileAnalysis } from '../core/analyze';
import { report } from '../core/report';
import { TOOL_VERSION } from '../core/report';
import { loadGrammars } from '../grammars';
import { USAGE, UsageError, parseCli } from './args';
import { InputError, collectSources, readSource } from './files';
import { formatFile } from './text';

export async function run(argv: string[], out: (s: string) => void, err: (s: string) => void): Promise<number> {
  let args;
  try {
    args = parseCli(argv);
  } catch (e) {
    if (e instanceof UsageError) {
      err(`offload-ledger: ${e.message}`);
      return 2;
    }
    throw e;
  }
  if (args.command === 'help') {
    out(USAGE);
    return 0;
  }
  if (args.command === 'version') {
    out(TOOL_VERSION);
    return 0;
  }
  let analyses: FileAnalysis[];
  try {
    const files = collectSources(args.paths).map(readSource);
    const grammars = await loadGrammars();
    analyses = files.map((f) => analyzeSource(f, grammars, { bindings: args.bindings }));
  } catch (e) {
    if (e instanceof InputError) {
      err(`offload-ledger: ${e.message}`);
      return 2;
    }
    throw e;
  }
  for (const a of analyses) {
    for (const ie of a.internalErrors) err(`offload-ledger: internal error while analysing ${a.path}: ${ie.split('\n')[0]}`);
  }
  if (args.format === 'json') out(JSON.stringify(report(analyses), null, 2));
  else out(analyses.map(formatFile).join('\n\n'));
  return analyses.some((a) => a.findings.some((f) => f.severity === 'error')) ? 1 : 0;
}

/** Runs the CLI on this process's arguments and sets its exit code. */
export function main(): void {
  run(process.argv.slice(2), (s) => process.stdout.write(s + '\n'), (s) => process.stderr.write(s + '\n')).then(
    (code) => { process.exitCode = code; },
    (e) => {
      process.stderr.write(`offload-ledger: internal error: ${e instanceof Error ? e.stack : String(e)}\n`);
      process.exitCode = 2;
    },
  );
}

if (require.main === module) main();
