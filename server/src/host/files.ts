/**
 * Finding and reading source files for the CLI and the language server: directories are searched
 * recursively for C, C++ and Fortran sources; binary and oversized files are refused with a
 * one-line reason.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { languageOfPath } from '../core/language';
import type { SourceLanguage } from '../core/types';

/** Files above this size are refused: stencil sources are far smaller, and a huge file is usually generated data. */
export const MAX_FILE_BYTES = 16 * 1024 * 1024;

export class InputError extends Error {}

export interface SourceFile {
  path: string;
  language: SourceLanguage;
  text: string;
}

const skipDirs = new Set(['node_modules', '.git', '.svn', '.hg', 'dist', 'build']);

export function collectSources(paths: string[]): string[] {
  const out: string[] = [];
  for (const p of paths) {
    let st;
    try {
      st = statSync(p);
    } catch {
      throw new InputError(`${p}: no such file or directory`);
    }
    if (st.isDirectory()) {
      const found = walk(p);
      if (found.length === 0) throw new InputError(`${p}: directory holds no C, C++ or Fortran sources`);
      out.push(...found);
    } else {
      if (!languageOfPath(p)) throw new InputError(`${p}: not a C, C++ or Fortran source (by its extension)`);
      out.push(p);
    }
  }
  return [...new Set(out)];
}

function walk(dir: string): string[] {
  const out: string[] = [];
  for (const entry of readdirSync(dir, { withFileTypes: true }).sort((a, b) => a.name.localeCompare(b.name))) {
    const full = join(dir, entry.name);
    if (entry.isDirectory()) {
      if (!skipDirs.has(entry.name) && !entry.name.startsWith('.')) out.push(...walk(full));
    } else if (entry.isFile() && languageOfPath(entry.name)) {
      out.push(full);
    }
  }
  return out;
}

export function readSource(path: string): SourceFile {
  const language = languageOfPath(path);
  if (!language) throw new InputError(`${path}: not a C, C++ or Fortran source`);
  let buf: Buffer;
  try {
    const st = statSync(path);
    if (st.size > MAX_FILE_BYTES) {
      throw new InputError(`${path}: too large to analyse (${(st.size / 2 ** 20).toFixed(1)} MiB; the limit is ${MAX_FILE_BYTES / 2 ** 20} MiB)`);
    }
    buf = readFileSync(path);
  } catch (err) {
    if (err instanceof InputError) throw err;
    throw new InputError(`${path}: cannot be read (${(err as NodeJS.ErrnoException).code ?? String(err)})`);
  }
  if (looksBinary(buf)) throw new InputError(`${path}: binary file, not source text`);
  return { path, language, text: buf.toString('utf8') };
}

/**
 * Reads a header for `#include "…"`: undefined when it does not exist, is a folder, is too large
 * or is binary (the preprocessor then says the header was not found, and goes on).
 */
export function readHeader(path: string): string | undefined {
  try {
    const st = statSync(path);
    if (!st.isFile() || st.size > MAX_FILE_BYTES) return undefined;
    const buf = readFileSync(path);
    return looksBinary(buf) ? undefined : buf.toString('utf8');
  } catch {
    return undefined;
  }
}

/** A NUL byte in the first 8 KiB marks a binary file (the heuristic git and grep use; common practice). */
export function looksBinary(buf: Buffer): boolean {
  return buf.subarray(0, 8192).includes(0);
}
