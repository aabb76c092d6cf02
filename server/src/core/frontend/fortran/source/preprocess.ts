/**
 * The C preprocessor lines that Fortran sources (`.F90`, `.F`) commonly carry. As in the C front
 * end, only the first branch of every `#if`/`#ifdef`/`#ifndef` is analysed: it is the
 * configuration the file selects by default, and analysing both branches would count one loop
 * twice. `#define NAME value` lines become constant bindings; `#include` is ignored because the
 * analysis reads one file without I/O.
 */

export interface Preprocessed {
  /** True for every line the compiler would see (preprocessor lines themselves are false). */
  active: boolean[];
  /** Object-like macros in definition order, names as written. */
  defines: Map<string, string>;
}

interface Frame {
  /** Whether the current branch is active. */
  on: boolean;
}

export function preprocess(lines: readonly string[]): Preprocessed {
  const active: boolean[] = [];
  const defines = new Map<string, string>();
  const stack: Frame[] = [];
  const live = (): boolean => (stack.length === 0 ? true : stack[stack.length - 1].on);
  for (const line of lines) {
    const m = /^\s*#\s*(\w*)(.*)$/.exec(line);
    if (!m) {
      active.push(live());
      continue;
    }
    active.push(false);
    const word = m[1];
    const rest = m[2].trim();
    if (word === 'if' || word === 'ifdef' || word === 'ifndef') {
      stack.push({ on: live() });
    } else if (word === 'elif' || word === 'else') {
      // Later branches are never the configuration analysed, see the file comment.
      if (stack.length > 0) stack[stack.length - 1].on = false;
    } else if (word === 'endif') {
      stack.pop();
    } else if (word === 'define' && live()) {
      const d = /^([A-Za-z_]\w*)(\(?)\s*(.*)$/.exec(rest);
      // Function-like macros are skipped: Fortran sources rarely use them for sizes.
      if (d && d[2] === '') defines.set(d[1], d[3].replace(/\/\*.*?\*\//g, '').trim());
    } else if (word === 'undef' && live()) {
      defines.delete(rest.split(/\s+/)[0] ?? '');
    }
  }
  return { active, defines };
}
