/**
 * The one module that loads tree-sitter grammars. The .wasm files ship inside the npm packages
 * `tree-sitter-c` and `tree-sitter-cpp` (see grammars/PROVENANCE.md); they are resolved from the
 * installed packages, never from the working directory and never downloaded.
 */
import { createRequire } from 'node:module';
import { Language, Parser } from 'web-tree-sitter';
import type { SourceLanguage } from './core/types';

export interface Grammars {
  /** Returns a parser for the language, or undefined for languages without a tree-sitter grammar (Fortran). */
  parserFor(language: SourceLanguage): Parser | undefined;
}

// Resolves the grammar packages relative to this module, both in the bundled CommonJS build
// (where esbuild defines import.meta.url from __filename) and under the test runner (ESM).
const resolveFromHere = createRequire(import.meta.url).resolve;

let loading: Promise<Grammars> | undefined;

export function loadGrammars(): Promise<Grammars> {
  loading ??= load();
  return loading;
}

async function load(): Promise<Grammars> {
  await Parser.init();
  const [c, cpp] = await Promise.all([
    Language.load(resolveFromHere('tree-sitter-c/tree-sitter-c.wasm')),
    Language.load(resolveFromHere('tree-sitter-cpp/tree-sitter-cpp.wasm')),
  ]);
  const parsers = new Map<SourceLanguage, Parser>();
  for (const [lang, grammar] of [['c', c], ['cpp', cpp]] as const) {
    const parser = new Parser();
    parser.setLanguage(grammar);
    parsers.set(lang, parser);
  }
  return { parserFor: (language) => parsers.get(language) };
}
