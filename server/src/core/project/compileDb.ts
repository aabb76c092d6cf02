/**
 * The JSON compilation database (`compile_commands.json`, Clang's "JSON Compilation Database
 * Format Specification"), read as data: an array of command objects, each with `directory` (the
 * working directory of the compilation), `file` (the translation unit, relative to `directory`
 * or absolute) and either `arguments` (argv as a list of strings) or `command` (one
 * shell-escaped string). From each entry the analysis takes what changes what the preprocessor
 * sees: `-D`/`-U`, `-I`/`-iquote`/`-isystem`/`-idirafter` (made absolute against `directory`),
 * `-fopenacc`/`-fopenmp` and their vendor spellings, and `-std=`. Every other flag is ignored.
 *
 * Pure: the caller reads the file and checks which sources exist. Nothing in a database is ever
 * run: commands are split into words as data, response files (`@file`) are not read, and shell
 * expansion is never attempted (the specification excludes it).
 */
import type { PreprocessSettings } from '../analyze';
import { readCompilerFlags } from '../preprocessor/flags';
import { folderOf, resolvePath } from './paths';

export const COMPILE_DATABASE = 'compile_commands.json';

export interface CompileEntry {
  /** The source file, absolute and normalised (forward slashes). */
  file: string;
  /** The working directory of the compilation, absolute and normalised. */
  directory: string;
  /** The words of the command: `arguments` as given, or `command` split as the specification says. */
  arguments: string[];
  defines: [string, string][];
  undefines: string[];
  /** Include folders in command-line order, absolute. */
  includeDirs: string[];
  /** The offload model the flags switch on (`-fopenacc`, `-fopenmp`, `-acc`, `-mp`, …). */
  directives?: 'openacc' | 'openmp' | 'both';
  /** The language standard (`-std=c++17` → `c++17`); the last one wins, as with the compilers. */
  std?: string;
  /** 0-based position in the database, for messages. */
  index: number;
}

export interface CompileDbProblem {
  /** 0-based position of the entry; absent for a problem of the whole file. */
  index?: number;
  /** The entry's file when it names one (absolute). */
  file?: string;
  message: string;
}

export interface CompileDatabase {
  /** Where the database was read from (absolute). */
  path: string;
  /** Readable entries in database order; a file compiled twice keeps every entry. */
  entries: CompileEntry[];
  /** One per entry that could not be read, or one for the whole file; each ends with what was done. */
  problems: CompileDbProblem[];
}

/** Larger databases are refused rather than parsed: generated megabyte files are the norm, gigabytes are not. */
export const MAX_DATABASE_CHARS = 256 * 1024 * 1024;

/**
 * Reads a database from its text. `path` is the database's own absolute path: a relative
 * `directory` is taken relative to the folder holding the database (the specification asks for
 * absolute directories; tools that write relative ones mean the database's folder).
 */
export function parseCompileDatabase(text: string, path: string): CompileDatabase {
  const db: CompileDatabase = { path, entries: [], problems: [] };
  if (text.length > MAX_DATABASE_CHARS) {
    db.problems.push({ message: `too large to read (${Math.round(text.length / 2 ** 20)} MiB); no entry is used` });
    return db;
  }
  let data: unknown;
  try {
    data = JSON.parse(text.replace(/^\uFEFF/, ''));
  } catch (e) {
    db.problems.push({ message: `not valid JSON (${e instanceof Error ? e.message : String(e)}); no entry is used` });
    return db;
  }
  if (!Array.isArray(data)) {
    db.problems.push({ message: 'not a compilation database: the top level must be an array of command objects; no entry is used' });
    return db;
  }
  const base = folderOf(path);
  data.forEach((raw, index) => {
    const entry = readEntry(raw, index, base);
    if ('message' in entry) db.problems.push(entry);
    else db.entries.push(entry);
  });
  return db;
}

function readEntry(raw: unknown, index: number, base: string): CompileEntry | CompileDbProblem {
  const skip = (why: string, file?: string): CompileDbProblem => ({ index, ...(file ? { file } : {}), message: `${why}; entry skipped` });
  if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) return skip('not a command object');
  const o = raw as Record<string, unknown>;
  if (typeof o.directory !== 'string' || o.directory === '') return skip('no `directory` (a string) is given');
  if (typeof o.file !== 'string' || o.file === '') return skip('no `file` (a string) is given');
  const directory = resolvePath(base, o.directory);
  const file = resolvePath(directory, o.file);
  let args: string[];
  if (o.arguments !== undefined) {
    if (!Array.isArray(o.arguments) || !o.arguments.every((a) => typeof a === 'string')) return skip('`arguments` is not a list of strings', file);
    args = o.arguments as string[];
  } else if (typeof o.command === 'string') {
    args = splitCommand(o.command);
  } else {
    return skip('neither `arguments` nor `command` is given', file);
  }
  if (args.length === 0) return skip('the command is empty', file);
  // arguments[0] is the compiler; the rest are its flags and inputs.
  const flags = readCompilerFlags(args.slice(1));
  let std: string | undefined;
  for (const a of args.slice(1)) {
    const m = /^--?std=(.+)$/.exec(a);
    if (m) std = m[1];
  }
  return {
    file,
    directory,
    arguments: args,
    defines: flags.defines,
    undefines: flags.undefines,
    includeDirs: flags.includeDirs.map((d) => resolvePath(directory, d)),
    ...(flags.directives ? { directives: flags.directives } : {}),
    ...(std ? { std } : {}),
    index,
  };
}

/**
 * Splits a `command` into words. The specification: arguments "may be shell quoted and escaped
 * following platform conventions, with '"' and '\' being the only special characters. Shell
 * expansion is not supported." So a backslash outside quotes takes the next character literally,
 * and inside double quotes it escapes only `"` and `\` (the specification's own example,
 * `-DSOMEDEF="With spaces, quotes and \\-es."`, keeps its backslash before `-`). Single quotes
 * are read as POSIX shells read them, because POSIX build tools (Meson, Bear) write them.
 */
export function splitCommand(text: string): string[] {
  const out: string[] = [];
  let cur = '';
  let started = false;
  let k = 0;
  while (k < text.length) {
    const c = text[k];
    if (c === '"') {
      started = true;
      k++;
      while (k < text.length && text[k] !== '"') {
        if (text[k] === '\\' && (text[k + 1] === '"' || text[k + 1] === '\\')) k++;
        cur += text[k++];
      }
      k++;
    } else if (c === "'") {
      started = true;
      const end = text.indexOf("'", k + 1);
      const stop = end < 0 ? text.length : end;
      cur += text.slice(k + 1, stop);
      k = stop + 1;
    } else if (c === '\\' && k + 1 < text.length) {
      started = true;
      cur += text[k + 1];
      k += 2;
    } else if (/\s/.test(c)) {
      if (started) out.push(cur);
      cur = '';
      started = false;
      k++;
    } else {
      started = true;
      cur += c;
      k++;
    }
  }
  if (started) out.push(cur);
  return out;
}

/** The entry for a file (absolute): the first one, as compilers' tools do when a file is built twice. */
export function entryFor(db: CompileDatabase, file: string): CompileEntry | undefined {
  const key = resolvePath('/', file);
  return db.entries.find((e) => e.file === key);
}

/**
 * `__STDC_VERSION__` and `__cplusplus` for the standards whose values the standards fix (C99
 * §6.10.8 199901L, C11 §6.10.8.1 201112L, C17 201710L, C23 202311L; C++98 199711L, C++11
 * 201103L, C++14 201402L, C++17 201703L, C++20 202002L, C++23 202302L; from memory). GNU
 * dialects (`gnu11`, `gnu++17`) give the same values. Draft names (`c2x`, `c++2b`) and Fortran
 * standards are recorded on the entry but change no macro, since compilers give drafts varying
 * values.
 */
const C_VERSIONS: Record<string, string> = {
  '99': '199901L', '9x': '199901L', '11': '201112L', '1x': '201112L', '17': '201710L', '18': '201710L', '23': '202311L',
};
const CPP_VERSIONS: Record<string, string> = {
  '98': '199711L', '03': '199711L', '11': '201103L', '0x': '201103L', '14': '201402L', '1y': '201402L', '17': '201703L', '1z': '201703L', '20': '202002L', '23': '202302L',
};

export function standardMacros(std: string | undefined): { defines: [string, string][]; undefines: string[] } {
  if (!std) return { defines: [], undefines: [] };
  const cpp = /^(?:c|gnu)\+\+(\w+)$/.exec(std);
  if (cpp) return CPP_VERSIONS[cpp[1]] ? { defines: [['__cplusplus', CPP_VERSIONS[cpp[1]]]], undefines: [] } : { defines: [], undefines: [] };
  const iso = /^iso9899:(\d{4})$/.exec(std);
  const c = iso ? { 1990: '89', 1999: '99', 2011: '11', 2017: '17', 2018: '18' }[Number(iso[1])] : /^(?:c|gnu)(\w+)$/.exec(std)?.[1];
  if (!c) return { defines: [], undefines: [] };
  // C89/C90 define no __STDC_VERSION__ (it came with the 1994 amendment).
  if (c === '89' || c === '90') return { defines: [], undefines: ['__STDC_VERSION__'] };
  return C_VERSIONS[c] ? { defines: [['__STDC_VERSION__', C_VERSIONS[c]]], undefines: [] } : { defines: [], undefines: [] };
}

/**
 * The preprocessor settings of one entry, with the user's own flags on top: their defines
 * replace the entry's of the same name, their undefines apply last, their include folders are
 * searched after the entry's, and their directive model wins.
 */
export function entrySettings(entry: CompileEntry, user: PreprocessSettings = {}): PreprocessSettings {
  const std = standardMacros(entry.std);
  const defines = new Map<string, string>([...std.defines, ...entry.defines]);
  for (const [k, v] of user.defines ?? []) defines.set(k, v);
  // The entry's undefines apply to its own defines; a name the user defines stays defined.
  const undefines = [...std.undefines.filter((u) => !defines.has(u)), ...entry.undefines.filter((u) => !user.defines?.has(u)), ...(user.undefines ?? [])];
  const includeDirs = [...entry.includeDirs, ...(user.includeDirs ?? [])];
  const directives = user.directives ?? entry.directives;
  return {
    defines,
    ...(undefines.length > 0 ? { undefines: [...new Set(undefines)] } : {}),
    includeDirs: [...new Set(includeDirs)],
    ...(directives ? { directives } : {}),
  };
}
