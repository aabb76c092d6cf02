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

const WASM: Partial<Record<SourceLanguage, string>> = { c: 'tree-sitter-c/tree-sitter-c.wasm', cpp: 'tree-sitter-cpp/tree-sitter-cpp.wasm' };
let init: Promise<void> | undefined;
/** One parser per language, made once per thread when first asked for. */
const parsers = new Map<SourceLanguage, Promise<Parser>>();

function parserPromise(language: SourceLanguage): Promise<Parser> | undefined {
  const wasm = WASM[language];
  if (!wasm) return undefined;
  let p = parsers.get(language);
  if (!p) {
    init ??= Parser.init();
    p = init.then(async () => {
      const parser = new Parser();
      parser.setLanguage(await Language.load(resolveFromHere(wasm)));
      return parser;
    });
    parsers.set(language, p);
  }
  return p;
}

/**
 * Parsers for `languages` (default: every language with a grammar). A run that reads only C does
 * not load the C++ grammar (the CLI passes the languages of its files); asking for a language
 * that was not loaded answers undefined, as for Fortran.
 */
export async function loadGrammars(languages: Iterable<SourceLanguage> = Object.keys(WASM) as SourceLanguage[]): Promise<Grammars> {
  const wanted = [...new Set(languages)].filter((l) => WASM[l]);
  const loaded = new Map<SourceLanguage, Parser>();
  await Promise.all(wanted.map(async (l) => loaded.set(l, await parserPromise(l)!)));
  return { parserFor: (language) => loaded.get(language) };
}
