/**
 * The other sources beside a document (same folder, same language family), so that a time loop
 * calling a kernel in a sibling file is followed in the editor as on the command line. Open
 * documents give their current text; the rest is read from disk. Bounded so that a folder of
 * generated code cannot slow every keystroke.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { languageOfPath } from '../../core/language';
import type { SourceLanguage } from '../../core/types';

export interface NeighbourSource {
  path: string;
  language: SourceLanguage;
  text: string;
}

const MAX_FILES = 32;
const MAX_FILE_BYTES = 1 << 20;
const MAX_TOTAL_BYTES = 4 << 20;

const family = (l: SourceLanguage): string => (l === 'fortran' ? 'fortran' : 'c');

export function neighbourSources(path: string, language: SourceLanguage, openText: (path: string) => string | undefined): NeighbourSource[] {
  let names: string[];
  try {
    names = readdirSync(dirname(path)).sort();
  } catch {
    return [];
  }
  const out: NeighbourSource[] = [];
  let total = 0;
  for (const name of names) {
    if (out.length >= MAX_FILES) break;
    const full = join(dirname(path), name);
    const lang = languageOfPath(name);
    if (full === path || !lang || family(lang) !== family(language)) continue;
    try {
      const text = openText(full) ?? (statSync(full).size <= MAX_FILE_BYTES ? readFileSync(full, 'utf8') : undefined);
      if (text === undefined || text.includes('\0') || total + text.length > MAX_TOTAL_BYTES) continue;
      total += text.length;
      out.push({ path: full, language: lang, text });
    } catch {
      // A file that vanished or cannot be read is simply not a neighbour.
    }
  }
  return out;
}
