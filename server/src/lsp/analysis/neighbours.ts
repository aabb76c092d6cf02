/**
 * The other sources beside a document (same folder, same language family), so that a time loop
 * calling a kernel in a sibling file is followed in the editor as on the command line. Open
 * documents give their current text; the rest is read from disk (kept by modification time and
 * size, so an edit of the document re-reads nothing and hands over the same strings, which the
 * reuse of analyses compares at once). Bounded so that a folder of generated code cannot slow
 * every keystroke.
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
const texts = new Map<string, { stamp: string; text: string | undefined }>();
const MAX_CACHED = 2048;

/** A file's text (undefined when too large), read again only when its modification time or size changes. */
function readStamped(full: string): string | undefined {
  const st = statSync(full);
  const stamp = `${st.mtimeMs}:${st.size}`;
  const hit = texts.get(full);
  if (hit && hit.stamp === stamp) return hit.text;
  const text = st.isFile() && st.size <= MAX_FILE_BYTES ? readFileSync(full, 'utf8') : undefined;
  if (!hit && texts.size >= MAX_CACHED) texts.delete(texts.keys().next().value!);
  texts.set(full, { stamp, text });
  return text;
}

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
      const text = openText(full) ?? readStamped(full);
      if (text === undefined || text.includes('\0') || total + text.length > MAX_TOTAL_BYTES) continue;
      total += text.length;
      out.push({ path: full, language: lang, text });
    } catch {
      // A file that vanished or cannot be read is simply not a neighbour.
    }
  }
  return out;
}
