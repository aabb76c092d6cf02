/**
 * Sizes a program reads from its input with a literal default: the default is what a run
 * without arguments uses, so the analysis binds it and says so instead of leaving the size
 * symbolic. The forms read (each the only assignments of the name in the procedure):
 *
 *   int n = argc > 1 ? atoi(argv[1]) : 4096;
 *   if (argc > 1) n = atoi(argv[1]); else n = 4096;      (either branch order)
 *   int n = 4096; if (argc > 1) n = atoi(argv[1]);
 *
 * "Input" is the procedure's argument vector (`main`'s second parameter, else a name `argv`) or a
 * value read with `getenv`. A user binding still overrides the default (analysis/bindings.ts).
 */
import type * as S from '../../symbolic';
import type { Procedure, Stmt, VExpr } from '../../model/program';
import { printValue, toSymbolic, walkStatements } from '../../model/values';

export interface InputDefault {
  name: string;
  value: S.Expr;
  /** The sentence the report and the hover show. */
  note: string;
}

const ENV_READERS = /(^|::)(secure_)?getenv$/;

/** `assigned`: how many times each name is assigned in the procedure (declarations with an initialiser count). */
export function inputDefaults(p: Procedure, assigned: ReadonlyMap<string, number>): InputDefault[] {
  const isMain = p.name === 'main' || p.name.endsWith('::main');
  const argv = isMain && p.params.length >= 2 ? p.params[1].name : 'argv';
  const argc = isMain && p.params.length >= 2 ? p.params[0].name : 'argc';
  // Names that hold what getenv returned (`const char *s = getenv("N")`).
  const env = new Set<string>();
  walkStatements(p.body, (s) => {
    if (s.kind === 'assign' && s.target.kind === 'var' && s.value.kind === 'call' && ENV_READERS.test(s.value.name)) env.add(s.target.name);
  });
  const source = (v: VExpr): 'argument' | 'environment' | undefined =>
    mentions(v, (n) => n === argv) ? 'argument' : mentions(v, (n) => env.has(n)) || callsEnv(v) ? 'environment' : undefined;
  const tests = (v: VExpr): boolean => mentions(v, (n) => n === argc || n === argv || env.has(n)) || callsEnv(v);

  const out = new Map<string, InputDefault>();
  const add = (name: string, def: VExpr, from: 'argument' | 'environment', line: number, count: number): void => {
    // Only a literal: a default written as a macro or a variable is left to the bindings of its
    // own (and stays symbolic, as the races-2 fixtures' "size known only at run time" needs).
    const value = def.kind === 'num' && !def.isFloat ? toSymbolic(def) : undefined;
    if (!value || (assigned.get(name) ?? 0) !== count || out.has(name)) return;
    const when = from === 'argument' ? 'the default when no argument is given' : 'the default when the environment does not set it';
    out.set(name, { name, value, note: `assuming ${name} = ${printValue(def)}, ${when} (line ${line + 1}); another value: --bind ${name}=VALUE` });
  };

  // Only statements that run once, before any loop: the procedure's straight-line part.
  const straight: Stmt[] = [];
  const collect = (stmts: readonly Stmt[]): void => {
    for (const s of stmts) {
      if (s.kind === 'block') collect(s.body);
      else if (s.kind !== 'loop') straight.push(s);
    }
  };
  collect(p.body);
  const single = (stmts: readonly Stmt[]): Stmt | undefined => {
    const flat = stmts.length === 1 && stmts[0].kind === 'block' ? stmts[0].body : stmts;
    return flat.length === 1 ? flat[0] : undefined;
  };
  const literals = new Map<string, { value: VExpr; line: number }>();
  for (const s of straight) {
    if (s.kind === 'assign' && s.target.kind === 'var' && s.op === '=') {
      const v = s.value;
      if (v.kind === 'cond' && tests(v.test)) {
        // n = test ? input : default (or the other way round).
        const fromThen = source(v.then);
        const fromElse = source(v.else);
        if (fromThen && !fromElse) add(s.target.name, v.else, fromThen, s.range.start.line, 1);
        else if (fromElse && !fromThen) add(s.target.name, v.then, fromElse, s.range.start.line, 1);
      } else if (!source(v)) {
        literals.set(s.target.name, { value: v, line: s.range.start.line });
      }
    } else if (s.kind === 'if' && tests(s.condition)) {
      const a = single(s.then);
      const b = single(s.otherwise);
      const assignOf = (x: Stmt | undefined): (Stmt & { kind: 'assign' }) | undefined =>
        x && x.kind === 'assign' && x.target.kind === 'var' && x.op === '=' ? x : undefined;
      const ta = assignOf(a);
      const tb = assignOf(b);
      if (ta && tb && ta.target.kind === 'var' && tb.target.kind === 'var' && ta.target.name === tb.target.name) {
        // if (test) n = input; else n = default; (either way round)
        const sa = source(ta.value);
        const sb = source(tb.value);
        if (sa && !sb) add(ta.target.name, tb.value, sa, s.range.start.line, 2);
        else if (sb && !sa) add(ta.target.name, ta.value, sb, s.range.start.line, 2);
      } else if (ta && ta.target.kind === 'var' && s.otherwise.length === 0) {
        // n = default; … if (test) n = input;
        const from = source(ta.value);
        const before = literals.get(ta.target.name);
        if (from && before) add(ta.target.name, before.value, from, before.line, 2);
      }
    }
  }
  return [...out.values()];
}

function mentions(v: VExpr, is: (name: string) => boolean): boolean {
  switch (v.kind) {
    case 'var': return is(v.name);
    case 'index': return is(v.access.array) || v.access.subscriptValues.some((x) => mentions(x, is));
    case 'bin': return mentions(v.left, is) || mentions(v.right, is);
    case 'unary':
    case 'cast': return mentions(v.operand, is);
    case 'call': return v.args.some((a) => mentions(a, is));
    case 'cond': return mentions(v.test, is) || mentions(v.then, is) || mentions(v.else, is);
    default: return false;
  }
}

function callsEnv(v: VExpr): boolean {
  switch (v.kind) {
    case 'call': return ENV_READERS.test(v.name) || v.args.some(callsEnv);
    case 'bin': return callsEnv(v.left) || callsEnv(v.right);
    case 'unary':
    case 'cast': return callsEnv(v.operand);
    case 'cond': return callsEnv(v.test) || callsEnv(v.then) || callsEnv(v.else);
    default: return false;
  }
}
