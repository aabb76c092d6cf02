/**
 * `offload-ledger port FILE[:LINE] [--model openacc|openmp] [--write]`: writes the resident port
 * of the time loops that run on the host (core/port/plans.ts): compute directives for every nest
 * the analysis proves free of loop-carried dependences, the data region around the time loop and
 * the updates host code needs. Prints the plan's estimate and a unified diff; `--write` rewrites
 * the file. A file with syntax errors is refused with the first error's place: a port of code the
 * analysis cannot read could be wrong.
 */
import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import type { Node } from 'web-tree-sitter';
import { analyzeSource, type FileAnalysis, type TimeLoopReport } from '../core/analyze';
import { portPlans, portable } from '../core/port/plans';
import { unifiedDiff } from '../core/translate';
import { loadGrammars } from '../grammars';
import type { PortArgs } from './args';
import { InputError, readHeader, readSource } from '../host/files';
import { chooseProfile, readMachinesFile } from '../host/machines';
import { DatabaseFlags } from '../host/compileDb';
import { factor, seconds, spread } from './text';
import { boundWords } from '../core/estimate/terms';

/** The first syntax error of a C or C++ text (tree-sitter), or of a Fortran file (gfortran -fsyntax-only, when installed). */
function firstSyntaxError(path: string, text: string, language: string, parse: ((t: string) => Node | undefined) | undefined): string | undefined {
  if (language === 'fortran') {
    const r = spawnSync('gfortran', ['-fsyntax-only', '-cpp', path], { encoding: 'utf8', timeout: 60_000 });
    if (r.error || r.status === 0) return undefined;
    const m = /^(.*?:\d+:\d+):[\s\S]*?Error: (.*)$/m.exec(r.stderr);
    return m ? `${m[1]}: ${m[2]}` : undefined;
  }
  const root = parse?.(text);
  if (!root || !root.hasError) return undefined;
  let found: Node | undefined;
  const walk = (n: Node): void => {
    if (found) return;
    if (n.type === 'ERROR' || n.isMissing) { found = n; return; }
    for (const c of n.children) if (c && c.hasError || c?.isMissing) walk(c);
  };
  walk(root);
  if (!found) return undefined;
  const f = found as Node;
  return `${path}:${f.startPosition.row + 1}:${f.startPosition.column + 1}: ${f.isMissing ? `missing ${f.type}` : `cannot read \`${f.text.split('\n')[0].slice(0, 40)}\``}`;
}

export async function runPort(args: PortArgs, out: (s: string) => void, err: (s: string) => void): Promise<number> {
  const source = readSource(args.file);
  const g = await loadGrammars();
  const parser = g.parserFor(source.language);
  const error = firstSyntaxError(source.path, source.text, source.language, parser ? (t) => parser.parse(t)?.rootNode ?? undefined : undefined);
  if (error) throw new InputError(`port refuses a file with syntax errors; the first: ${error}`);
  const profile = chooseProfile(readMachinesFile(args.machines), args.profile);
  const deps = { ...g, readInclude: readHeader };
  // The file's own compilation database entry (the nearest compile_commands.json, or
  // --compile-commands), under the user's flags, as `check` reads it.
  const user = { defines: args.defines, undefines: args.undefines, includeDirs: args.includeDirs, directives: args.directives };
  const flags = new DatabaseFlags(args.compileCommands, (line) => err(`offload-ledger: ${line}`)).settingsFor(source.path, user);
  const options = {
    ...flags,
    bindings: args.bindings, profile, baseline: args.baseline, timeLoopVariables: args.timeLoopVariables, portFamily: args.model, plans: false,
  };
  const analysis = analyzeSource(source, deps, options);
  for (const ie of analysis.internalErrors) err(`offload-ledger: internal error while analysing ${source.path}: ${ie.split('\n')[0]}`);
  let loops = portable(analysis);
  if (args.line !== undefined) {
    const at = args.line - 1;
    loops = loops.filter((t) => t.timeLoop.loop.range.start.line <= at && at <= t.timeLoop.loop.range.end.line);
    if (loops.length === 0) throw new InputError(`${source.path}:${args.line} is in no time loop that runs on the host; give a line of the time loop to port, or none for every one`);
  }
  if (loops.length === 0) {
    const why = analysis.timeLoops.length === 0 ? 'it has no time loop' : 'its time loops already offload';
    throw new InputError(`${source.path}: nothing to port: ${why}`);
  }
  const again = (text: string, whatIf: boolean): FileAnalysis => analyzeSource({ ...source, text, model: undefined }, deps, { ...options, baseline: analysis.baseline, whatIf, programRun: false });
  const port = portPlans(analysis, source.text, again, profile, analysis.baseline, { family: args.model, only: loops });
  if (!port) throw new InputError(`${source.path}: nothing to port`);
  for (const tl of loops) for (const l of planLines(tl, port.plans.get(tl)!)) err(l);
  if (port.text === source.text) {
    err(`offload-ledger: ${source.path}: no nest can be offloaded as it is; the reasons are above`);
    return 1;
  }
  if (args.write) {
    writeFileSync(source.path, port.text);
    err(`offload-ledger: wrote the port into ${source.path}`);
  } else {
    out(unifiedDiff(source.text, port.text, `a/${args.file}`, `b/${args.file}`));
  }
  return 0;
}

function planLines(tl: TimeLoopReport, p: NonNullable<TimeLoopReport['plans']>): string[] {
  const line = tl.timeLoop.loop.keywordRange.start.line + 1;
  const sp = (s: { low: number; expected: number; high: number } | null): string => (s ? `${spread(s)} (expected ${factor(s.expected)}×)` : 'no estimate');
  const out = [`time loop at line ${line}: ${p.offloaded.length} nest${p.offloaded.length === 1 ? '' : 's'} offloaded with ${p.family === 'openacc' ? 'OpenACC' : 'OpenMP'}, a data region around the loop${p.updates.length > 0 ? ` and ${p.updates.length} update${p.updates.length === 1 ? '' : 's'}` : ''}`];
  if (p.hostStepSeconds !== null && p.resident.stepSeconds !== null) {
    out.push(`  estimate (roofline, ${p.baseline === 'core' ? 'one-core' : 'whole-node'} baseline): step ${seconds(p.hostStepSeconds)} on the host → ${seconds(p.resident.stepSeconds)} ported; speedup ${sp(p.resident.speedup)}, bound by ${boundWords(p.resident.bound)}. Measure on the target machine to decide.`);
  }
  for (const h of p.onHost) out.push(`  left on the host: line ${h.line} (${h.procedure}): ${h.reason}`);
  return out;
}
