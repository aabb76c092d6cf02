/**
 * Which files a `check` or `plan` reads, and with which preprocessor flags: the files and folders
 * given, each read with its own compilation database entry when one exists (under the user's
 * `-D`/`-U`/`-I`/`--directives`), or, with no files given, the files a compilation database in
 * the current folder (or `./build`, or `--compile-commands FILE`) compiles there.
 */
import type { PreprocessSettings } from '../core/analyze';
import { COMPILE_DATABASE, entrySettings } from '../core/project/compileDb';
import type { CheckArgs, PlanArgs } from './args';
import { UsageError } from './args';
import { DatabaseFlags, databaseHere, lookupEntry, problemLines, projectSources, readDatabase, shown } from '../host/compileDb';
import { InputError, type SourceFile, collectSources, readSource } from '../host/files';

export interface ProjectFiles {
  files: SourceFile[];
  /** Per file, the preprocessor settings its model is built with. */
  settings: PreprocessSettings[];
}

export function projectFiles(args: CheckArgs | PlanArgs, user: PreprocessSettings, note: (line: string) => void, cwd = process.cwd()): ProjectFiles {
  if (args.paths.length > 0) {
    const flags = new DatabaseFlags(args.compileCommands, note, cwd);
    const files = collectSources(args.paths).map(readSource);
    return { files, settings: files.map((f) => flags.settingsFor(f.path, user)) };
  }
  const dbPath = args.compileCommands ?? databaseHere(cwd);
  if (!dbPath) throw new UsageError(`\`${args.command}\` needs at least one file or directory, or a ${COMPILE_DATABASE} in this folder or in ./build`);
  const db = readDatabase(dbPath);
  // With nothing but the database to go on, a database that cannot be read at all ends the run.
  const whole = db.problems.find((p) => p.index === undefined);
  if (whole) throw new InputError(problemLines({ ...db, problems: [whole] }, cwd)[0]);
  for (const line of problemLines(db, cwd)) note(line);
  const paths = projectSources(db, cwd, note, cwd);
  const files: SourceFile[] = [];
  for (const p of paths) {
    try {
      files.push(readSource(p));
    } catch (e) {
      // One unreadable file (binary, too large) does not stop the rest of the project.
      if (!(e instanceof InputError)) throw e;
      note(`${e.message}; skipped`);
    }
  }
  if (files.length === 0) throw new InputError(`${shown(db.path, cwd)} lists no C, C++ or Fortran source in ${cwd} that can be read, so there is nothing to check`);
  return { files, settings: files.map((f) => { const e = lookupEntry(db, f.path); return e ? entrySettings(e, user) : user; }) };
}
