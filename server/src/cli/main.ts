/**
 * `offload-ledger` command-line entry. Exit status: 0 when no finding has severity error,
 * 1 otherwise, 2 on usage or input errors (with a one-line message on stderr).
 */
import { analyzeSource, buildModel, type FileAnalysis } from '../core/analyze';
import { createRequire } from 'node:module';
import { relative, sep } from 'node:path';
import { report } from '../core/report';
import { sarifLog } from '../core/sarif';
import { TOOL_VERSION } from '../core/report';
import { loadGrammars } from '../grammars';
import { type CheckArgs, type PlanArgs, USAGE, UsageError, parseCli } from './args';
import { measure, writeProfile } from './calibrate';
import { InputError, readHeader } from '../host/files';
import { projectFiles } from './project';
import { linkAcrossFiles } from '../core/project/crossFile';
import { chooseProfile, readMachinesFile } from '../host/machines';
import { formatPlans, planFiles } from './plan';
import { formatFile } from './text';
import { planningHtml } from '../planning/html';
import { formatVerify, verify, verifyJson } from './verify';
import { runTranslate } from './translate';
import { runPort } from './port';

type Out = (s: string) => void;

export async function run(argv: string[], out: Out, err: Out): Promise<number> {
  try {
    if (argv[0] === 'translate') return await runTranslate(argv.slice(1), { stdout: out, stderr: err });
    const args = parseCli(argv);
    switch (args.command) {
      case 'help':
        out(USAGE);
        return 0;
      case 'version':
        out(TOOL_VERSION);
        return 0;
      case 'serve':
        // The server reads --stdio / --node-ipc / --socket from the process arguments itself.
        // The language server's own bundle beside this one (server/dist/lsp.js starts it when
        // loaded): the CLI bundle does not carry it, so the other commands neither load nor parse it.
        createRequire(import.meta.url)('./lsp.js');
        return new Promise<number>(() => undefined);
      case 'calibrate': {
        const { host, measurements } = measure(args, err);
        const file = writeProfile(host, args.out);
        if (args.format === 'json') out(JSON.stringify({ file, host, measurements }, null, 2));
        else out(`wrote profile \`measured\` to ${file}: ${(host.bandwidthNode / 1e9).toFixed(1)} GB/s node, ${(host.bandwidthCore / 1e9).toFixed(1)} GB/s one core; use it with --profile measured`);
        return 0;
      }
      case 'port':
        return await runPort(args, out, err);
      case 'verify': {
        const r = await verify(args, (line) => err(`offload-ledger: ${line}`));
        out(args.format === 'json' ? JSON.stringify(verifyJson(r), null, 2) : formatVerify(r, (p) => relative(process.cwd(), p).split(sep).join('/')));
        // 1 when the run failed, the builds disagree or a construct moved other bytes than predicted.
        const failed = r.separate.timedOut || r.separate.signal !== null || r.separate.status !== 0;
        return failed || r.sameOutput === false || r.comparison.differences > 0 ? 1 : 0;
      }
      default:
        return await analyse(args, out, err);
    }
  } catch (e) {
    if (e instanceof UsageError || e instanceof InputError) {
      err(`offload-ledger: ${e.message}`);
      return 2;
    }
    throw e;
  }
}

async function analyse(args: CheckArgs | PlanArgs, out: Out, err: Out): Promise<number> {
  const profile = chooseProfile(readMachinesFile(args.machines), args.profile);
  const user = { defines: args.defines, undefines: args.undefines, includeDirs: args.includeDirs, directives: args.directives };
  // The files (given, or listed by the compilation database) and each one's own preprocessor flags.
  const { files, settings } = projectFiles(args, user, (line) => err(`offload-ledger: ${line}`));
  // Only the grammars of the files checked (a C project does not load the C++ grammar).
  const deps = { ...(await loadGrammars(files.map((f) => f.language))), readInclude: readHeader };
  // Every file's model first, so that a time loop calling a kernel in another file follows it.
  const models = files.map((f, k) => buildModel(f, deps, settings[k]));
  const analyses: FileAnalysis[] = files.map((f, k) =>
    analyzeSource({ ...f, model: models[k] }, deps, { ...settings[k], bindings: args.bindings, profile, baseline: args.baseline, workspace: models.length > 1 ? models : undefined, timeLoopVariables: args.timeLoopVariables, projectRoot: process.cwd() }),
  );
  // A transfer or stale access in a callee of another file: reported at the call and at the callee, linked.
  if (analyses.length > 1) linkAcrossFiles(analyses, (p) => files.find((f) => f.path === p)?.text, [], process.cwd());
  for (const a of analyses) {
    for (const ie of a.internalErrors) err(`offload-ledger: internal error while analysing ${a.path}: ${ie.split('\n')[0]}`);
  }
  // A binding no file uses is most likely a typo: say so instead of ignoring it.
  for (const name of args.bindings.keys()) {
    if (analyses.length > 0 && analyses.every((a) => a.unmatchedBindings.includes(name))) {
      err(`offload-ledger: --bind ${name}=${args.bindings.get(name)} names nothing in the files checked (no macro, constant, variable or trip-count symbol \`${name}\`${analyses.some((a) => a.language === 'fortran') ? '; Fortran names match in any case' : ''}); it is ignored`);
    }
  }
  if (args.command === 'plan') {
    const plans = planFiles(analyses, args);
    if (args.format === 'json') out(JSON.stringify({ ...report(analyses), planning: plans }, null, 2));
    else out(formatPlans(plans, profile.name));
    return 0;
  }
  if (args.format === 'json') out(JSON.stringify(report(analyses), null, 2));
  else if (args.format === 'sarif') out(JSON.stringify(sarifLog(analyses, (p) => relative(process.cwd(), p).split(sep).join('/')), null, 2));
  else if (args.format === 'html') out(await planningHtml(analyses, profile.name, args.baseline ?? [...new Set(analyses.map((a) => a.baseline))].join('/')));
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
