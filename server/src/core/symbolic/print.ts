/**
 * Printing of canonical expressions: a readable form for messages and valid C or Fortran text
 * for directives. Printing never throws; every expression has some valid rendering.
 */

import { Atom, Expr, Mono, Term, constRat, setPrinter, soleAtom } from './expr';
import { lcmBig } from './rational';

export type Style = 'text' | 'c' | 'fortran';

/** Default Fortran integers are 32-bit, so larger literals get the 8-byte kind suffix. */
const INT32_MAX = 2147483647n;

function printInt(v: bigint, style: Style): string {
  return style === 'fortran' && v > INT32_MAX ? `${v}_8` : v.toString();
}

/**
 * Prints the whole expression. Non-integer coefficients are brought to one common denominator
 * and printed as '(3*n + 1)/2', which is also what integer C or Fortran code would compute.
 */
export function printExpr(e: Expr, style: Style): string {
  if (e.terms.length === 0) return '0';
  let den = 1n;
  for (const t of e.terms) den = lcmBig(den, t.coef.d);
  if (den === 1n) return printTerms(e.terms, style);
  const scaled = e.terms.map((t) => ({ coef: { n: (t.coef.n * den) / t.coef.d, d: 1n }, mono: t.mono }));
  const body = printTerms(scaled, style);
  return `${scaled.length > 1 ? `(${body})` : body}/${printInt(den, style)}`;
}

function printTerms(terms: readonly Term[], style: Style): string {
  let out = '';
  terms.forEach((t, i) => {
    const negative = t.coef.n < 0n;
    const body = printTerm(negative ? -t.coef.n : t.coef.n, t.mono, style);
    if (i === 0) out = negative ? `-${body}` : body;
    else out += (negative ? ' - ' : ' + ') + body;
  });
  return out;
}

function printTerm(abs: bigint, mono: Mono, style: Style): string {
  if (mono.factors.length === 0) return printInt(abs, style);
  // A lone infix atom such as 'N/2' needs no parentheses; inside a product it does, because
  // '2*N/2' would parse as '(2*N)/2'.
  const alone = abs === 1n && mono.factors.length === 1 && mono.factors[0][1] === 1;
  const parts = mono.factors.map(([a, p]) => printPower(a, p, style, alone));
  return abs === 1n ? parts.join('*') : `${printInt(abs, style)}*${parts.join('*')}`;
}

function printPower(a: Atom, p: number, style: Style, alone: boolean): string {
  const base = printAtom(a, style, !alone);
  if (p === 1) return base;
  // C has no power operator; the readable form uses products too so that it parses in both
  // languages.
  return style === 'fortran' ? `${base}**${p}` : Array<string>(p).fill(base).join('*');
}

/** True when the expression can stand as an operand of '/' or '%' without parentheses. */
function isPrimary(e: Expr, style: Style): boolean {
  const c = constRat(e);
  if (c) return c.d === 1n && c.n >= 0n;
  const a = soleAtom(e);
  if (!a) return false;
  return a.kind === 'sym' || a.kind === 'call' || a.kind === 'min' || a.kind === 'max' || (a.kind === 'mod' && style !== 'c');
}

function operand(e: Expr, style: Style): string {
  const s = printExpr(e, style);
  return isPrimary(e, style) ? s : `(${s})`;
}

function printAtom(a: Atom, style: Style, wrap: boolean): string {
  const args = () => a.args.map((x) => printExpr(x, style)).join(', ');
  switch (a.kind) {
    case 'sym':
      return a.name;
    case 'call':
      return `${a.name}(${args()})`;
    case 'min':
    case 'max':
      return style === 'c' ? printTernary(a.kind, a.args) : `${a.kind}(${args()})`;
    case 'mod':
      if (style !== 'c') return `mod(${args()})`;
      return wrapIf(`${operand(a.args[0], style)} % ${operand(a.args[1], style)}`, wrap);
    case 'fdiv':
      return wrapIf(`${operand(a.args[0], style)}/${operand(a.args[1], style)}`, wrap);
  }
}

function wrapIf(s: string, wrap: boolean): string {
  return wrap ? `(${s})` : s;
}

/** C has no min/max operator, so they become conditional expressions the parser folds back. */
function printTernary(kind: 'min' | 'max', args: readonly Expr[]): string {
  const first = printExpr(args[0], 'c');
  const rest = args.length === 2 ? printExpr(args[1], 'c') : printTernary(kind, args.slice(1));
  return `(${first} ${kind === 'min' ? '<' : '>'} ${rest} ? ${first} : ${rest})`;
}

setPrinter((e) => printExpr(e, 'text'));

const UNITS = ['KiB', 'MiB', 'GiB', 'TiB', 'PiB', 'EiB'];

/** IEC binary units with one decimal above plain bytes: '512 B', '4.0 MiB', '1.6 GiB'. */
export function formatBytes(n: number): string {
  if (!Number.isFinite(n)) return `${n} B`;
  const sign = n < 0 ? '-' : '';
  let v = Math.abs(n);
  if (v < 1024) return `${sign}${Number.isInteger(v) ? v : v.toFixed(1)} B`;
  let u = -1;
  while (u < UNITS.length - 1 && v >= 1024) {
    v /= 1024;
    u++;
  }
  // Rounding may reach 1024.0 (e.g. 1048575 B); show that as the next unit instead.
  if (Number(v.toFixed(1)) >= 1024 && u < UNITS.length - 1) {
    v /= 1024;
    u++;
  }
  return `${sign}${v.toFixed(1)} ${UNITS[u]}`;
}
