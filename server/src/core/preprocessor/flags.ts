/**
 * Compiler flags that change what the preprocessor sees, read from a command line as a user
 * writes it (`-DUSE_GPU -DNX=512 -U_OPENMP -I include -fopenacc`): the editor's one setting and,
 * later, compilation databases use the same reader. Flags it does not use are ignored.
 */
import type { DirectiveModel } from './index';

export interface CompilerFlags {
  defines: [string, string][];
  undefines: string[];
  includeDirs: string[];
  /** `-fopenacc` / `-fopenmp` (or `-acc`, `-mp`, `-qopenmp`, `-fiopenmp`) as written; both give 'both'. */
  directives?: DirectiveModel | 'both';
  /** Tokens that look like preprocessor flags but cannot be read (`-D` with no name). */
  unreadable: string[];
}

/** Splits a command line into words, honouring single and double quotes and backslash escapes. */
export function splitCommandLine(text: string): string[] {
  const out: string[] = [];
  let cur = '';
  let quote: string | undefined;
  let has = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (quote) {
      if (c === quote) quote = undefined;
      else if (c === '\\' && quote === '"' && i + 1 < text.length) cur += text[++i];
      else cur += c;
    } else if (c === '"' || c === "'") {
      quote = c;
      has = true;
    } else if (c === '\\' && i + 1 < text.length) {
      cur += text[++i];
      has = true;
    } else if (/\s/.test(c)) {
      if (has || cur !== '') out.push(cur);
      cur = '';
      has = false;
    } else {
      cur += c;
    }
  }
  if (has || cur !== '') out.push(cur);
  return out;
}

export function readCompilerFlags(args: readonly string[]): CompilerFlags {
  const out: CompilerFlags = { defines: [], undefines: [], includeDirs: [], unreadable: [] };
  let acc = false;
  let omp = false;
  for (let k = 0; k < args.length; k++) {
    const a = args[k];
    const value = (flag: string): string | undefined => (a === flag ? args[++k] : a.slice(flag.length));
    if (a.startsWith('-D')) {
      const d = value('-D');
      const m = d !== undefined ? /^([A-Za-z_]\w*)(?:=(.*))?$/s.exec(d) : null;
      if (m) out.defines.push([m[1], m[2] ?? '1']);
      else out.unreadable.push(a);
    } else if (a.startsWith('-U')) {
      const u = value('-U');
      if (u && /^[A-Za-z_]\w*$/.test(u)) out.undefines.push(u);
      else out.unreadable.push(a);
    } else if (a.startsWith('-I') || a === '-iquote' || a === '-isystem' || a === '-idirafter') {
      const dir = a.startsWith('-I') ? value('-I') : args[++k];
      if (dir) out.includeDirs.push(dir);
      else out.unreadable.push(a);
    } else if (/^-(fopenacc|acc|hacc)(=|$)/.test(a)) {
      acc = true;
    } else if (/^-(fopenmp|mp|qopenmp|fiopenmp|homp)(=|$)/.test(a)) {
      omp = true;
    }
  }
  if (acc || omp) out.directives = acc && omp ? 'both' : acc ? 'openacc' : 'openmp';
  return out;
}
