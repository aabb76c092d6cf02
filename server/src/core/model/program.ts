/**
 * The language-neutral program model. Front ends (C and C++ via tree-sitter, Fortran via its own
 * reader) build it; every analysis works on it and never on syntax trees, so a new language only
 * needs a new front end.
 */
import type { Expr } from '../symbolic';
import type { Directive, Finding, Range, SourceLanguage } from '../types';

/** Element type of a variable or array. `bytes` is the storage size of one element. */
export interface ElementType {
  /** Canonical name: float, double, complex-float, complex-double, int, long, char, bool, unknown, or a kind spelling. */
  name: string;
  bytes: number;
  isFloat: boolean;
}

export type Layout = 'row-major' | 'column-major';

export interface Declaration {
  name: string;
  type: ElementType;
  /**
   * Extents as written, first written first (C `a[NY][NX]` → [NY, NX]; Fortran `a(nx, ny)` →
   * [nx, ny]). Empty for scalars and for pointers whose shape is only known as an element count.
   */
  dims: Expr[];
  /** Fortran lower bounds per dimension (default 1); C arrays start at 0 and leave this empty. */
  lowerBounds?: Expr[];
  /** Total element count of a pointer allocated with malloc/calloc/new (or of a static array). */
  elementCount?: Expr;
  isPointer: boolean;
  isArray: boolean;
  isConst: boolean;
  /** Set for a C++ container (`std::vector`): its data needs a raw pointer before a clause can name it. */
  container?: string;
  scope: 'global' | 'local' | 'param';
  /** Integer value of a literal or constant initialiser, when there is one. */
  init?: Expr;
  range: Range;
}

/**
 * A value expression, kept as a small language-neutral tree so that cost analyses can count
 * floating-point operations by type and find array accesses without touching syntax trees.
 */
export type VExpr =
  | { kind: 'num'; text: string; isFloat: boolean; bytes?: number }
  /**
   * `through`: the element indexes a Fortran component path passed on its way (`t` in
   * `chunk%tiles(t)%field%u`): the path names one storage for every element, and these say which
   * element's copy this is (a loop over `t` touches a different one each pass).
   */
  | { kind: 'var'; name: string; through?: VExpr[] }
  | { kind: 'index'; access: ArrayAccess }
  | { kind: 'bin'; op: string; left: VExpr; right: VExpr }
  | { kind: 'unary'; op: string; operand: VExpr }
  | { kind: 'call'; name: string; args: VExpr[] }
  | { kind: 'cond'; test: VExpr; then: VExpr; else: VExpr }
  | { kind: 'cast'; type: ElementType; operand: VExpr }
  | { kind: 'opaque'; text: string };

/** One array element reference, with subscripts as symbolic forms (first written first). */
export interface ArrayAccess {
  array: string;
  /** Element indexes a component path passed on its way (see the `var` VExpr). */
  through?: VExpr[];
  /** Symbolic subscripts; an entry is undefined when that subscript is not an integer expression we can read. */
  subscripts: (Expr | undefined)[];
  /** Subscript source text, for messages. */
  subscriptText: string[];
  /** Value-expression form of each subscript (to find nested reads such as a[idx[i]]). */
  subscriptValues: VExpr[];
  isWrite: boolean;
  isRead: boolean;
  range: Range;
}

interface StmtBase {
  range: Range;
  /** Directives that govern this statement (a compute or data construct placed just before it). */
  directives: Directive[];
}

export interface LoopStmt extends StmtBase {
  kind: 'loop';
  /** Induction variable; undefined for while loops. */
  variable?: string;
  /** Inclusive bounds in iteration order normalised to an increasing range, and a positive step. */
  lower?: Expr;
  upper?: Expr;
  step?: Expr;
  tripCount?: Expr;
  /** Source of the loop header, for messages. */
  header: string;
  /** Range of the `for`/`do` keyword. */
  keywordRange: Range;
  body: Stmt[];
  /** Set when bounds depend on an enclosing loop variable (triangular); trip count is then approximate. */
  triangular?: boolean;
  /**
   * Set for loops the front end made itself from array syntax (Fortran `a(2:n-1) = …`, whole-array
   * `h = h + dt*f`, `where`): they have synthetic induction variables and no keyword of their own,
   * so `keywordRange` is the statement's range.
   */
  implied?: boolean;
  /**
   * The test that keeps a loop without counted bounds going, as written: C `while (c)`,
   * `do … while (c)` and a `for (…; c; …)` header without an update; Fortran `do while (c)`.
   * Absent for `for (;;)` and a bare Fortran `do`.
   */
  condition?: VExpr;
  /** Set for C `do … while (c)`: the test runs after each pass through the body. */
  testAfterBody?: boolean;
  /** The header's own initialisation when the header has no update (`for (it = 0; it < n;)`). */
  initial?: { name: string; value: Expr };
  /** The step counter the model pass found (model/stepCounters.ts); `variable` is then its name. */
  counter?: StepCounter;
  /**
   * Set when `tripCount` is an upper bound, not the count: the loop may stop earlier on another
   * test (`while (err > tol && iter < iter_max)`, a `break`). Reports say "at most".
   */
  tripCountIsBound?: boolean;
  /**
   * The name of the symbol that stands for a trip count no header gives (`steps_iter`,
   * `trips_main_1`); `tripCount` is then that symbol, so a user binding gives it a value.
   */
  tripSymbol?: string;
  /** Set when our annotation comment (`offload-ledger: time-loop`) marks this loop as the time loop. */
  markedTimeLoop?: boolean;
}

/** A scalar incremented by one exactly once per iteration of a loop that has no counted header. */
export interface StepCounter {
  name: string;
  /** Its value when the loop starts, from the assignment before the loop; absent when unknown. */
  start?: Expr;
  /** The increment statement (`iter++`, `it = it + 1`). */
  incrementRange: Range;
  /** Where the count or its bound comes from: a test in the header or an `if (…) break`. */
  boundFrom?: 'condition' | 'break';
  /** The test that bounds the count, as written (`iter < iter_max`). */
  boundText?: string;
  /** Other ways the loop can end early, in words (`the test err > tol`, `a break at line 40`). */
  otherExits: string[];
}

export interface AssignStmt extends StmtBase {
  kind: 'assign';
  target: { kind: 'var'; name: string } | { kind: 'index'; access: ArrayAccess };
  /** `=`, or a compound operator such as `+=`. */
  op: string;
  value: VExpr;
}

export interface CallStmt extends StmtBase {
  kind: 'call';
  name: string;
  args: VExpr[];
  argText: string[];
}

export interface IfStmt extends StmtBase {
  kind: 'if';
  condition: VExpr;
  conditionText: string;
  then: Stmt[];
  otherwise: Stmt[];
}

export interface BlockStmt extends StmtBase {
  kind: 'block';
  body: Stmt[];
}

/** A standalone directive (update, enter/exit data, wait, declare) in executable position. */
export interface DirectiveStmt extends StmtBase {
  kind: 'directive';
  directive: Directive;
}

/** Any other statement; `values` holds the expressions it evaluates (return values, conditions). */
export interface OtherStmt extends StmtBase {
  kind: 'other';
  text: string;
  values: VExpr[];
}

export type Stmt = LoopStmt | AssignStmt | CallStmt | IfStmt | BlockStmt | DirectiveStmt | OtherStmt;

export interface Procedure {
  name: string;
  /** A Fortran main program (`program name`): the entry of its program whatever its name. */
  program?: true;
  range: Range;
  nameRange: Range;
  params: Declaration[];
  /** Every local declaration in the body, scopes flattened (shadowing is rare in stencil codes). */
  locals: Declaration[];
  body: Stmt[];
  /** Constant bindings visible in this procedure beyond the file's (literal initialisations never reassigned). */
  bindings: Map<string, Expr>;
  /** Set when the procedure comes from another file of the workspace: that file's path. */
  origin?: string;
  /** What the front end assumed to cost it (a template's element type), in sentences. */
  assumptions?: string[];
}

export interface ProgramModel {
  path: string;
  language: SourceLanguage;
  layout: Layout;
  procedures: Procedure[];
  globals: Declaration[];
  /** File-level constant bindings: object-like macros, const/constexpr/enum values, parameters. */
  bindings: Map<string, Expr>;
  /** Object-like macros whose value is a floating-point literal (for typing literals in flop counts). */
  floatConstants: Map<string, ElementType>;
  /** Every directive in the file, in source order, including orphans and declare directives. */
  directives: Directive[];
  /** Findings made while reading: directive-syntax, unreadable code regions. */
  findings: Finding[];
}
