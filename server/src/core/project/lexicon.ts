/**
 * A file's names without parsing it: the procedures and modules it defines, and every name it
 * mentions. The editor reads this for each file of a project (a regular-expression pass over the
 * text, far cheaper than a model) to choose which files a document's first analysis needs: the
 * files defining what it calls or uses (and what those call, down the chain), and the files that
 * call it (up the chain, for sizes passed down at calls). Every other file waits until the first
 * diagnostics are out.
 *
 * It over-approximates on purpose (a name in a comment is stripped, but a local variable named
 * like another file's procedure still counts as a use): a file chosen needlessly costs time, a
 * file missed would make the first answer differ from the final one.
 */
import type { SourceLanguage } from '../types';

export interface Lexicon {
  /** Procedures (C/C++ functions and methods by their last name; Fortran subroutines, functions, programs) and Fortran modules. */
  defines: ReadonlySet<string>;
  /** Every identifier of the text outside comments and string literals (Fortran in lower case). */
  words: ReadonlySet<string>;
}

const C_NOT_FUNCTIONS = new Set(['if', 'for', 'while', 'switch', 'catch', 'return', 'sizeof', 'do', 'else', 'case', 'defined', '_Pragma', 'alignof', 'decltype', 'static_assert']);

/** C/C++ text with comments and string/character literals blanked (lengths kept). */
function stripC(text: string): string {
  return text.replace(/\/\*[\s\S]*?(\*\/|$)|\/\/[^\n]*|"(?:[^"\\\n]|\\.)*"|'(?:[^'\\\n]|\\.)*'/g, (m) => m.replace(/[^\n]/g, ' '));
}

/** Fortran text in lower case with `!` comments, fixed-form comment lines and string literals blanked. */
function stripFortran(text: string, fixed: boolean): string {
  return text
    .split('\n')
    .map((line) => {
      if (fixed && /^[cC*!]/.test(line)) return '';
      return line.replace(/'(?:[^'\n]|'')*'|"(?:[^"\n]|"")*"|![^\n]*/g, (m) => (m.startsWith('!') ? '' : ' '));
    })
    .join('\n')
    .toLowerCase();
}

export function lexiconOf(text: string, language: SourceLanguage, path = ''): Lexicon {
  const words = new Set<string>();
  const defines = new Set<string>();
  if (language === 'fortran') {
    const plain = stripFortran(text, /\.(f|for|ftn|f77)$/i.test(path));
    for (const m of plain.matchAll(/[a-z_]\w*/g)) words.add(m[0]);
    for (const m of plain.matchAll(/^[ \t]*(?:[\w(),*=\t ]*?[ \t])?(subroutine|function|program|module|submodule)[ \t]+(\w+)/gm)) {
      if (m[1] === 'module' && (m[2] === 'procedure' || m[2] === 'function' || m[2] === 'subroutine')) continue;
      defines.add(m[2]);
    }
    return { defines, words };
  }
  const plain = stripC(text);
  for (const m of plain.matchAll(/[A-Za-z_]\w*/g)) words.add(m[0]);
  // A name, its parameter list (one level of nested parentheses) and a body: a definition.
  const definition = /([A-Za-z_]\w*)\s*\((?:[^()]|\([^()]*\))*\)\s*(?:const\b\s*|noexcept\b\s*|override\b\s*|final\b\s*|->\s*[\w:<>*&\s]+?\s*)*(?::[^{;]*)?\{/g;
  for (const m of plain.matchAll(definition)) if (!C_NOT_FUNCTIONS.has(m[1])) defines.add(m[1]);
  return { defines, words };
}

/**
 * The files a document's analysis needs, by name: those defining a name the document mentions,
 * and what they mention in turn (down); those mentioning a name the document defines, and who
 * mentions theirs (up). `lexicons` are the other files of the project; each set keeps their order.
 */
export function filesNeeded(doc: Lexicon, lexicons: readonly { path: string; lexicon: Lexicon }[]): { down: Set<string>; up: Set<string> } {
  const definers = new Map<string, number[]>();
  lexicons.forEach((l, k) => {
    for (const d of l.lexicon.defines) {
      const list = definers.get(d);
      if (list) list.push(k);
      else definers.set(d, [k]);
    }
  });
  const chosen = new Set<number>();
  // Down: definers of the names used, transitively.
  const down: Lexicon[] = [doc];
  while (down.length > 0) {
    const l = down.pop()!;
    for (const w of l.words) {
      for (const k of definers.get(w) ?? []) {
        if (chosen.has(k)) continue;
        chosen.add(k);
        down.push(lexicons[k].lexicon);
      }
    }
  }
  // Up: files mentioning a name the document (or a caller found so far) defines.
  const upDefined = new Set(doc.defines);
  const up = new Set<number>();
  let grew = upDefined.size > 0;
  while (grew) {
    grew = false;
    lexicons.forEach((l, k) => {
      if (up.has(k)) return;
      for (const d of upDefined) {
        if (!l.lexicon.words.has(d)) continue;
        up.add(k);
        for (const e of l.lexicon.defines) upDefined.add(e);
        grew = true;
        return;
      }
    });
  }
  const paths = (ks: Iterable<number>): Set<string> => new Set([...ks].sort((a, b) => a - b).map((k) => lexicons[k].path));
  return { down: paths(chosen), up: paths(up) };
}
