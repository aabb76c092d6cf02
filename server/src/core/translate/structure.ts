/**
 * The little program structure the translator needs: where the statement (C) or loop nest
 * (Fortran) after a directive ends, brace depth per line, and where a function ends. It reads
 * tokens only, skipping comments, strings and preprocessor lines, so it never fails; on text it
 * cannot follow it gives a region that ends at the next line.
 */

interface Tok { t: string; line: number }

/** C/C++ tokens with their line: identifiers, numbers and single punctuation characters. */
export function cTokens(lines: string[], check?: () => void): Tok[] {
  const toks: Tok[] = [];
  let inBlock = false;
  let inDirective = false;
  // One sticky expression per word, read in place (no slice of the rest of the line per token).
  const word = /[A-Za-z_0-9.]+/y;
  for (let line = 0; line < lines.length; line++) {
    if ((line & 4095) === 4095) check?.();
    const l = lines[line];
    let i = 0;
    if (!inBlock && !inDirective && /^\s*#/.test(l)) inDirective = true;
    if (inDirective) {
      // Preprocessor lines (and their `\` continuations) are not statements.
      inDirective = /\\\s*$/.test(l);
      continue;
    }
    while (i < l.length) {
      if (inBlock) {
        const e = l.indexOf('*/', i);
        if (e < 0) { i = l.length; break; }
        inBlock = false;
        i = e + 2;
        continue;
      }
      const ch = l[i];
      if (ch === ' ' || ch === '\t' || /\s/.test(ch)) { i++; continue; }
      if (ch === '/' && l[i + 1] === '/') break;
      if (ch === '/' && l[i + 1] === '*') { inBlock = true; i += 2; continue; }
      if (ch === '"' || ch === "'") {
        const q = ch;
        for (i++; i < l.length && l[i] !== q; i++) if (l[i] === '\\') i++;
        i++;
        toks.push({ t: 'lit', line });
        continue;
      }
      word.lastIndex = i;
      const m = word.exec(l);
      if (m) { toks.push({ t: m[0], line }); i += m[0].length; continue; }
      toks.push({ t: ch, line });
      i++;
    }
  }
  return toks;
}

const OPEN: Record<string, string> = { '(': ')', '[': ']', '{': '}' };

/** Index just past the bracket group that starts at k (k is an opening bracket). */
function skipGroup(toks: Tok[], k: number): number {
  const stack: string[] = [];
  for (let i = k; i < toks.length; i++) {
    const t = toks[i].t;
    if (OPEN[t]) stack.push(OPEN[t]);
    else if (t === ')' || t === ']' || t === '}') {
      stack.pop();
      if (stack.length === 0) return i + 1;
    }
  }
  return toks.length;
}

/** Index just past the statement that starts at token k. */
function skipStatement(toks: Tok[], k: number): number {
  if (k >= toks.length) return k;
  const t = toks[k].t;
  if (t === '{') return skipGroup(toks, k);
  if (t === 'for' || t === 'while' || t === 'switch') {
    if (toks[k + 1]?.t !== '(') return k + 1;
    return skipStatement(toks, skipGroup(toks, k + 1));
  }
  if (t === 'if') {
    if (toks[k + 1]?.t !== '(') return k + 1;
    let e = skipStatement(toks, skipGroup(toks, k + 1));
    if (toks[e]?.t === 'else') e = skipStatement(toks, e + 1);
    return e;
  }
  if (t === 'do') {
    let e = skipStatement(toks, k + 1);
    if (toks[e]?.t === 'while') e = skipGroup(toks, e + 1);
    if (toks[e]?.t === ';') e++;
    return e;
  }
  // An expression or declaration statement: up to `;` outside brackets.
  for (let i = k; i < toks.length; i++) {
    const x = toks[i].t;
    if (OPEN[x]) { i = skipGroup(toks, i) - 1; continue; }
    if (x === ';') return i + 1;
    if (x === '}') return i;
  }
  return toks.length;
}

export interface CStructure {
  /** Last line of the statement that starts after `line` (the structured block of a directive). */
  statementEnd(afterLine: number): number;
  /** Last line of the declaration or function definition that starts after `line`. */
  declarationEnd(afterLine: number): number;
  /** Brace depth at the start of a line (0: file scope). */
  depthAt(line: number): number;
  /** Whether the statement after `line` is a `for` loop. */
  startsWithFor(afterLine: number): boolean;
  /** Line of the first token after `line`, or -1. */
  nextTokenLine(afterLine: number): number;
  /** The tokens from the first one after `fromLine` through line `toLine`. */
  tokensBetween(fromLine: number, toLine: number): string[];
}

export function cStructure(lines: string[], check?: () => void): CStructure {
  const toks = cTokens(lines, check);
  const first = (afterLine: number): number => {
    let lo = 0;
    let hi = toks.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (toks[mid].line <= afterLine) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  };
  const depth: number[] = new Array(lines.length + 1).fill(0);
  {
    let d = 0;
    let k = 0;
    for (let line = 0; line <= lines.length; line++) {
      while (k < toks.length && toks[k].line < line) {
        if (toks[k].t === '{') d++;
        if (toks[k].t === '}') d = Math.max(0, d - 1);
        k++;
      }
      depth[line] = d;
    }
  }
  return {
    statementEnd(afterLine) {
      const k = first(afterLine);
      if (k >= toks.length) return afterLine;
      const e = skipStatement(toks, k);
      return toks[Math.max(k, e - 1)].line;
    },
    declarationEnd(afterLine) {
      const k = first(afterLine);
      for (let i = k; i < toks.length; i++) {
        const x = toks[i].t;
        if (x === '(' || x === '[') { i = skipGroup(toks, i) - 1; continue; }
        if (x === ';') return toks[i].line;
        if (x === '{') {
          const e = skipGroup(toks, i);
          // `= { … };` initialisers end at the `;` after the braces.
          if (i > k && toks[i - 1].t === '=') { i = e - 1; continue; }
          return toks[e - 1]?.line ?? lines.length - 1;
        }
      }
      return lines.length - 1;
    },
    depthAt: (line) => depth[line] ?? 0,
    startsWithFor: (afterLine) => toks[first(afterLine)]?.t === 'for',
    nextTokenLine: (afterLine) => toks[first(afterLine)]?.line ?? -1,
    tokensBetween: (fromLine, toLine) => {
      const out: string[] = [];
      for (let k = first(fromLine); k < toks.length && toks[k].line <= toLine; k++) out.push(toks[k].t);
      return out;
    },
  };
}

/** Fortran statement text of a line without its label, comment or fixed-form columns, lower case. */
function fortranStatement(l: string, fixed: boolean): { label?: string; text: string } | undefined {
  if (fixed) {
    if (/^[cC*!]/.test(l)) return undefined;
    if (l.length > 5 && l[5] !== ' ' && l[5] !== '0') return undefined;
    const label = l.slice(0, 5).trim() || undefined;
    return { label, text: l.slice(6, 72).replace(/!.*$/, '').trim().toLowerCase() };
  }
  const s = l.replace(/!.*$/, '').trim();
  if (s === '') return undefined;
  const m = /^(\d+)\s+(.*)$/.exec(s);
  return m ? { label: m[1], text: m[2].toLowerCase() } : { text: s.toLowerCase() };
}

/**
 * Last line of the DO loop nest that starts after `afterLine` (end do, enddo or a labelled
 * terminal statement). Without a DO statement next, the region is the next statement's line.
 */
export function fortranLoopEnd(lines: string[], afterLine: number, fixed: boolean): number {
  const stack: (string | undefined)[] = [];
  for (let line = afterLine + 1; line < lines.length; line++) {
    const st = fortranStatement(lines[line], fixed);
    if (!st) continue;
    const text = st.text.replace(/^[a-z_]\w*\s*:\s*(?=do\b)/, '');
    // `do 10 i = …` closes at the statement labelled 10; `do i = …` and `do while` at `end do`.
    const doMatch = /^do\b(?!\s*=)\s*(\d+)?/.exec(text);
    if (doMatch) {
      stack.push(doMatch[1]);
      continue;
    }
    if (stack.length === 0) return line;
    if (/^end\s*do\b/.test(text)) stack.pop();
    else if (st.label) while (stack.length > 0 && stack[stack.length - 1] === st.label) stack.pop();
    if (stack.length === 0) return line;
  }
  return lines.length - 1;
}

/** Whether a Fortran line (outside directives) is inside a program unit's executable or spec part. */
export function fortranUnitDepth(lines: string[], fixed: boolean): number[] {
  // 0 at module/file level, 1 inside a subroutine, function or program.
  const out: number[] = [];
  let d = 0;
  for (const l of lines) {
    out.push(d);
    const st = fortranStatement(l, fixed);
    if (!st) continue;
    const t = st.text;
    if (/^end\s*(subroutine|function|program)\b/.test(t) || (/^end\s*$/.test(t) && d > 0)) d = Math.max(0, d - 1);
    else if (/^(?:(?:pure|elemental|recursive|impure|module)\s+)*(?:(?:integer|real|double\s+precision|logical|complex|character|type\s*\([^)]*\))(?:\s*\([^)]*\))?\s+)?(?:(?:pure|elemental|recursive)\s+)*(subroutine|function)\s+\w/.test(t) || /^program\s+\w/.test(t)) d++;
  }
  return out;
}
