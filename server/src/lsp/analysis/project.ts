/**
 * The compilation database in the editor: the flags of a document's own entry, and the other
 * sources the database compiles (in any folder of the workspace), so that a time loop's calls are
 * followed into kernels in other folders as `offload-ledger check` does for the project. Reading
 * is bounded like the sibling files (neighbours.ts) and cached by modification time, since a job
 * is made after every edit.
 */
import { readFileSync, statSync } from 'node:fs';
import { isAbsolute, join } from 'node:path';
import { entrySettings, type CompileDatabase } from '../../core/project/compileDb';
import { isInside } from '../../core/project/paths';
import type { PreprocessSettings } from '../../core/analyze';
import { languageOfPath } from '../../core/language';
import type { SourceLanguage } from '../../core/types';
import { InputError } from '../../host/files';
import { findDatabase, lookupEntry, problemLines, readDatabase } from '../../host/compileDb';
import { dirname } from 'node:path';
import type { AnalysisJob } from './job';
import type { NeighbourSource } from './neighbours';

export type JobPreprocess = NonNullable<AnalysisJob['preprocess']>;

/** The database a document uses: the setting's (relative to the folder) or the nearest one; problems go to `warn`. */
export function databaseOf(path: string, setting: string, folder: string, warn: (m: string) => void): CompileDatabase | undefined {
  const named = setting.trim();
  const where = named ? (isAbsolute(named) ? named : join(folder, named)) : findDatabase(dirname(path));
  if (!where) return undefined;
  try {
    const db = readDatabase(where);
    for (const line of problemLines(db, folder)) warn(`compile database ${line}`);
    return db;
  } catch (e) {
    if (!(e instanceof InputError)) throw e;
    warn(`offloadLedger.compileCommands: ${e.message}; files are read without it`);
    return undefined;
  }
}

const toSettings = (p: JobPreprocess): PreprocessSettings => ({ defines: new Map(p.defines), undefines: p.undefines, includeDirs: p.includeDirs, directives: p.directives });
const toJob = (s: PreprocessSettings): JobPreprocess => ({
  defines: [...(s.defines ?? [])], undefines: [...(s.undefines ?? [])], includeDirs: [...(s.includeDirs ?? [])], ...(s.directives ? { directives: s.directives } : {}),
});

/** A file's preprocessor settings: its database entry under the user's flags, or the user's flags alone. */
export function preprocessFor(db: CompileDatabase | undefined, path: string, user: JobPreprocess): JobPreprocess {
  const entry = db ? lookupEntry(db, path) : undefined;
  return entry ? toJob(entrySettings(entry, toSettings(user))) : user;
}

const MAX_PROJECT_FILES = 64;
const MAX_FILE_BYTES = 1 << 20;
const MAX_TOTAL_BYTES = 8 << 20;
const family = (l: SourceLanguage): string => (l === 'fortran' ? 'fortran' : 'c');
const texts = new Map<string, { stamp: string; text: string }>();

/**
 * The document's neighbours with each one's own flags, plus the other sources of the database
 * inside the workspace folder (same language family), open documents with their current text.
 */
export function projectNeighbours(
  db: CompileDatabase | undefined, path: string, language: SourceLanguage, folder: string,
  siblings: NeighbourSource[], user: JobPreprocess, openText: (path: string) => string | undefined,
): (NeighbourSource & { preprocess: JobPreprocess })[] {
  const out = siblings.map((n) => ({ ...n, preprocess: preprocessFor(db, n.path, user) }));
  if (!db) return out;
  const have = new Set([path, ...siblings.map((n) => n.path)]);
  let total = siblings.reduce((t, n) => t + n.text.length, 0);
  for (const e of db.entries) {
    if (out.length >= MAX_PROJECT_FILES) break;
    const lang = languageOfPath(e.file);
    if (!lang || family(lang) !== family(language) || have.has(e.file) || !isInside(e.file, folder)) continue;
    have.add(e.file);
    const text = openText(e.file) ?? readCached(e.file);
    if (text === undefined || total + text.length > MAX_TOTAL_BYTES) continue;
    total += text.length;
    out.push({ path: e.file, language: lang, text, preprocess: toJob(entrySettings(e, toSettings(user))) });
  }
  return out;
}

function readCached(file: string): string | undefined {
  try {
    const st = statSync(file);
    if (!st.isFile() || st.size > MAX_FILE_BYTES) return undefined;
    const stamp = `${st.mtimeMs}:${st.size}`;
    const hit = texts.get(file);
    if (hit && hit.stamp === stamp) return hit.text;
    const text = readFileSync(file, 'utf8');
    if (text.includes('\0')) return undefined;
    texts.set(file, { stamp, text });
    return text;
  } catch {
    // A file the database names but that is gone is simply not a neighbour.
    return undefined;
  }
}
