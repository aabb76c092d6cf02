/** Command-line arguments of `offload-ledger`, parsed with node:util's parseArgs. */
import { parseArgs } from 'node:util';

export interface CheckArgs {
  command: 'check';
  paths: string[];
  format: 'text' | 'json';
  bindings: Map<string, number>;
}

export type CliArgs = CheckArgs | { command: 'help' } | { command: 'version' };

export class UsageError extends Error {}

export const USAGE = `usage: offload-ledger check [--format text|json] [--bind NAME=VALUE ...] <files or directories>

  check     read C, C++ and Fortran sources and report loop nests, host-device traffic and findings
  --format  text (default) or json (follows the published report schema)
  --bind    give a size symbol a value, e.g. --bind NX=600 (repeatable)
  --help    this text
  --version the tool's version

exit status: 0 no error findings, 1 error findings, 2 usage or input errors`;

export function parseCli(argv: string[]): CliArgs {
  let parsed;
  try {
    parsed = parseArgs({
      args: argv,
      allowPositionals: true,
      options: {
        format: { type: 'string', short: 'f' },
        bind: { type: 'string', short: 'b', multiple: true },
        help: { type: 'boolean', short: 'h' },
        version: { type: 'boolean', short: 'v' },
      },
    });
  } catch (err) {
    throw new UsageError(err instanceof Error ? err.message : String(err));
  }
  const { values, positionals } = parsed;
  if (values.help) return { command: 'help' };
  if (values.version) return { command: 'version' };
  const [command, ...paths] = positionals;
  if (!command) throw new UsageError('missing command; try `offload-ledger check <files>`');
  if (command !== 'check') throw new UsageError(`unknown command \`${command}\`; the commands are: check`);
  if (paths.length === 0) throw new UsageError('`check` needs at least one file or directory');
  const format = values.format ?? 'text';
  if (format !== 'text' && format !== 'json') throw new UsageError(`unknown format \`${format}\`; use text or json`);
  const bindings = new Map<string, number>();
  for (const b of values.bind ?? []) {
    const m = /^\s*([A-Za-z_][\w.%>-]*)\s*=\s*(-?\d+)\s*$/.exec(b);
    if (!m) throw new UsageError(`--bind expects NAME=INTEGER, got \`${b}\``);
    bindings.set(m[1], Number(m[2]));
  }
  return { command: 'check', paths, format, bindings };
}
