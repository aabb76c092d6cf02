/**
 * Finding and reading `compile_commands.json` for the CLI and the language server: the database
 * named by the user, or the nearest one above a source file (in each folder and in its `build/`
 * subfolder, where CMake, Meson and Bear put it), read once per change of the file. The parsing
 * is the core's (`core/project/compileDb.ts`); this module only does the I/O and never runs
 * anything a database contains.
 */
import { existsSync, readFileSync, realpathSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve, sep } from 'node:path';
import type { PreprocessSettings } from '../core/analyze';
import { COMPILE_DATABASE, type CompileDatabase, type CompileEntry, entryFor, entrySettings, parseCompileDatabase } from '../core/project/compileDb';
import { isInside, normalisePath } from '../core/project/paths';
import { languageOfPath } from '../core/language';
import { InputError } from './files';

const cache = new Map<string, { stamp: string; db: CompileDatabase }>();

/**
 * Reads a database (absolute or relative to the current folder). Throws InputError when the
 * file does not exist or cannot be read; a file that is not a database is a database with one
 * problem and no entries, so the caller can say so and go on.
 */
export function readDatabase(path: string): CompileDatabase {
  const abs = resolve(path);
  let stamp: string;
  try {
    const st = statSync(abs);
    if (st.isDirectory()) return readDatabase(join(abs, COMPILE_DATABASE));
    stamp = `${st.mtimeMs}:${st.size}`;
  } catch {
    throw new InputError(`${path}: no such compilation database`);
  }
  const hit = cache.get(abs);
  if (hit && hit.stamp === stamp) return hit.db;
  let text: string;
  try {
    text = readFileSync(abs, 'utf8');
  } catch (err) {
    throw new InputError(`${path}: cannot be read (${(err as NodeJS.ErrnoException).code ?? String(err)})`);
  }
  const db = parseCompileDatabase(text, normalisePath(abs));
  cache.set(abs, { stamp, db });
  return db;
}

/** The database in `dir` or `dir/build`, else in the folders above; undefined when there is none. */
export function findDatabase(dir: string): string | undefined {
  let cur = resolve(dir);
  for (;;) {
    for (const candidate of [join(cur, COMPILE_DATABASE), join(cur, 'build', COMPILE_DATABASE)]) {
      if (existsSync(candidate)) return candidate;
    }
    const up = dirname(cur);
    if (up === cur) return undefined;
    cur = up;
  }
}

/** The database of the current folder only (`./compile_commands.json`, `./build/compile_commands.json`). */
export function databaseHere(cwd = process.cwd()): string | undefined {
  return [join(cwd, COMPILE_DATABASE), join(cwd, 'build', COMPILE_DATABASE)].find((p) => existsSync(p));
}

/** How a database path reads in a message: relative to the current folder when inside it. */
export function shown(path: string, cwd = process.cwd()): string {
  const rel = relative(cwd, path);
  return rel && !rel.startsWith('..') && !rel.startsWith(sep) ? rel.split(sep).join('/') : path;
}

function realOrSelf(p: string): string {
  try {
    return normalisePath(realpathSync(p));
  } catch {
    return normalisePath(p);
  }
}

/** The entry for a source path (as given), by its absolute path and, failing that, its real path. */
export function lookupEntry(db: CompileDatabase, file: string): CompileEntry | undefined {
  const abs = resolve(file);
  return entryFor(db, normalisePath(abs)) ?? entryFor(db, realOrSelf(abs)) ?? db.entries.find((e) => realOrSelf(e.file) === realOrSelf(abs));
}

/** One line per problem of the whole file or of an entry that could not be read. */
export function problemLines(db: CompileDatabase, cwd = process.cwd()): string[] {
  return db.problems.map((p) => `${shown(db.path, cwd)}${p.index !== undefined ? `, entry ${p.index + 1}` : ''}${p.file ? ` (${shown(p.file, cwd)})` : ''}: ${p.message}`);
}

/** Per-file preprocessor settings: each file's own entry (from the database it belongs to) under the user's flags. */
export class DatabaseFlags {
  private readonly byFolder = new Map<string, string | undefined>();
  private readonly reported = new Set<string>();

  /** `explicit`: the user's `--compile-commands` (or the editor setting); otherwise each file's nearest database is used. */
  constructor(private readonly explicit: string | undefined, private readonly note: (line: string) => void, private readonly cwd = process.cwd()) {}

  /** The database that applies to a source file, or undefined; its problems are noted once. */
  databaseFor(file: string): CompileDatabase | undefined {
    let path = this.explicit;
    if (!path) {
      const dir = dirname(resolve(file));
      if (!this.byFolder.has(dir)) this.byFolder.set(dir, findDatabase(dir));
      path = this.byFolder.get(dir);
    }
    if (!path) return undefined;
    let db: CompileDatabase;
    try {
      db = readDatabase(path);
    } catch (e) {
      // A database the user named must be readable; one found on the way up is only a help.
      if (this.explicit || !(e instanceof InputError)) throw e;
      if (!this.reported.has(path)) this.note(e.message);
      this.reported.add(path);
      this.byFolder.set(dirname(resolve(file)), undefined);
      return undefined;
    }
    if (!this.reported.has(db.path)) {
      this.reported.add(db.path);
      for (const line of problemLines(db, this.cwd)) this.note(line);
    }
    return db;
  }

  entryFor(file: string): CompileEntry | undefined {
    const db = this.databaseFor(file);
    return db ? lookupEntry(db, file) : undefined;
  }

  settingsFor(file: string, user: PreprocessSettings): PreprocessSettings {
    const entry = this.entryFor(file);
    return entry ? entrySettings(entry, user) : user;
  }
}

/** At most this many lines per kind of skipped entry; the rest are counted in one line. */
const MAX_LINES_PER_KIND = 10;

/**
 * The sources a database compiles inside `root` (the project being checked), shown relative to
 * the current folder as a user would type them, in the order a directory walk gives. Entries
 * naming files that do not exist, or files outside `root`, are noted (one line each) and left
 * out; files that are not C, C++ or Fortran (`.cu`, assembly) are left out silently.
 */
export function projectSources(db: CompileDatabase, root: string, note: (line: string) => void, cwd = process.cwd()): string[] {
  const out = new Map<string, string>();
  const skipped = { missing: [] as string[], outside: [] as string[] };
  const realRoot = realOrSelf(root);
  for (const e of db.entries) {
    if (!languageOfPath(e.file) || out.has(e.file)) continue;
    const where = `${shown(db.path, cwd)}, entry ${e.index + 1} (${shown(e.file, cwd)})`;
    if (!isInside(e.file, root) && !isInside(realOrSelf(e.file), realRoot)) {
      skipped.outside.push(`${where}: outside the project folder ${root}; entry skipped`);
      continue;
    }
    let isFile = false;
    try {
      isFile = statSync(e.file).isFile();
    } catch {
      // Missing: said below.
    }
    if (!isFile) {
      skipped.missing.push(`${where}: the file does not exist; entry skipped`);
      continue;
    }
    out.set(e.file, shown(e.file, cwd));
  }
  for (const lines of [skipped.missing, skipped.outside]) {
    for (const line of lines.slice(0, MAX_LINES_PER_KIND)) note(line);
    if (lines.length > MAX_LINES_PER_KIND) note(`${shown(db.path, cwd)}: ${lines.length - MAX_LINES_PER_KIND} more entries skipped for the same reason`);
  }
  return [...out.values()].sort(walkOrder);
}

/** The order of a sorted directory walk (files/collectSources): segment by segment, by localeCompare. */
function walkOrder(a: string, b: string): number {
  const x = a.split(/[\\/]/);
  const y = b.split(/[\\/]/);
  for (let k = 0; k < Math.min(x.length, y.length); k++) {
    if (x[k] !== y[k]) return x[k].localeCompare(y[k]);
  }
  return x.length - y.length;
}
