/**
 * C and C++ front end: a tree-sitter syntax tree in, the language-neutral program model out.
 * The parser is passed in by the caller (the grammar loader lives outside the core), so this
 * module does no I/O.
 */
import type { Parser } from 'web-tree-sitter';
import * as S from '../../symbolic';
import type { Declaration, ElementType, Procedure, ProgramModel } from '../../model/program';
import { walkStatements } from '../../model/values';
import { emptyModel } from '../../model/empty';
import { toSymbolic } from '../../model/values';
import type { Directive, Finding, SourceLanguage } from '../../types';
import { CExpressionBuilder, numberLiteral } from './expressions';
import { readDeclaration } from './declarations';
import { MacroTable } from './macros';
import { type MacroDef, type Preprocessed, preprocess } from '../../preprocessor';
import { type Node, field, namedChildren, rangeOf } from './nodes';
import { CStatementBuilder } from './statements';
import { TemplateUses, TypeAliases } from './templates';
import { readStepCounters } from '../../model/stepCounters';
import { markedLoopLines } from '../annotations';
import { inputDefaults } from './inputDefaults';
import { unparenthesisedValueNames } from './parenNames';

/**
 * `source` is the preprocessed text (inactive branches blanked, same lines and columns) with the
 * macros of the file and its headers; a plain string is read as it is, with its own macros.
 */
export function buildCModel(parser: Parser, source: string | Preprocessed, path: string, language: SourceLanguage): ProgramModel {
  const model = emptyModel(path, language);
  const pp = typeof source === 'string' ? preprocess(source, { path, language }) : source;
  model.findings.push(...pp.findings);
  let text = pp.text;
  let tree = parser.parse(text);
  if (!tree) return model;
  // `(i) + 1` read as a cast of `+1` to a type `i`: parse again with those parentheses blanked.
  const again = unparenthesisedValueNames(tree.rootNode, text);
  if (again !== undefined) {
    const second = parser.parse(again);
    if (second) {
      tree.delete();
      tree = second;
      text = again;
    }
  }
  try {
    new CModelBuilder(parser, text, language, model, pp.macros).build(tree.rootNode);
  } finally {
    tree.delete();
  }
  model.directives.sort((a, b) => a.range.start.line - b.range.start.line || a.range.start.col - b.range.start.col);
  try {
    readStepCounters(model, markedLoopLines(text, language));
  } catch {
    // The pass is written not to throw; the counters are only left unread if it does.
  }
  return model;
}

class CModelBuilder {
  private readonly macros = new MacroTable();
  /**
   * Names in scope: the file's globals, and while a function is read its parameters and locals.
   * A function's names are undone through `undo` when it ends, instead of copying the file-wide
   * Map for every function.
   */
  private readonly scope = new Map<string, Declaration>();
  /** Earlier entries of names set inside functions (undefined: the name was not in scope). */
  private readonly undo: [string, Declaration | undefined][] = [];
  /** Functions being read (the undo log is kept only inside one). */
  private depth = 0;
  private readonly exprs: CExpressionBuilder;
  private readonly stmts: CStatementBuilder;
  private locals: Declaration[] = [];
  private readonly types = new TypeAliases();
  private templateUses: TemplateUses | undefined;
  /** Notes of the template declarations being read (innermost last). */
  private readonly templateNotes: string[][] = [];

  constructor(
    parser: Parser,
    private readonly text: string,
    language: SourceLanguage,
    private readonly model: ProgramModel,
    private readonly ppMacros: ReadonlyMap<string, MacroDef>,
  ) {
    this.exprs = new CExpressionBuilder({
      parser,
      macros: this.macros,
      elementTypeOf: (name) => this.scope.get(name)?.type,
      types: this.types,
    });
    const directives: Directive[] = model.directives;
    const findings: Finding[] = model.findings;
    this.stmts = new CStatementBuilder({
      text,
      language,
      exprs: this.exprs,
      macros: this.macros,
      directives,
      findings,
      ppMacros,
      declare: (d) => {
        this.locals.push(d);
        this.bind(d);
      },
    });
  }

  private root: Node | undefined;

  build(root: Node): void {
    this.root = root;
    // Macros apply to the whole file here (the preprocessor's table at the end of the file, headers
    // included); a macro defined after its first use is rare in stencil codes.
    for (const m of this.ppMacros.values()) {
      this.macros.define(m.name, m.body, m.params, m.variadic);
      if (!m.params && TypeAliases.isTypeSpelling(m.body)) this.types.set(m.name, m.body);
    }
    this.bindMacros();
    this.topLevel(namedChildren(root));
    this.bindLiteralInitialisations();
  }

  private topLevel(nodes: Node[]): void {
    for (const n of nodes) {
      switch (n.type) {
        case 'function_definition':
          this.procedure(n);
          break;
        case 'declaration':
          this.globalDeclaration(n);
          break;
        case 'preproc_call':
          this.stmts.directive(n);
          break;
        case 'type_definition':
          this.typedef(n);
          this.enums(n);
          break;
        case 'alias_declaration': {
          const name = field(n, 'name')?.text;
          const type = field(n, 'type')?.text;
          if (name && type && this.types.typeOf(type).name !== 'unknown') this.types.set(name, type);
          break;
        }
        case 'template_declaration':
          this.template(n);
          break;
        case 'enum_specifier':
          this.enums(n);
          break;
        case 'preproc_if':
        case 'preproc_ifdef':
        case 'preproc_else':
        case 'preproc_elif':
        case 'linkage_specification':
        case 'declaration_list':
        case 'namespace_definition':
        case 'class_specifier':
        case 'struct_specifier':
        case 'field_declaration_list':
        case 'ERROR':
          this.topLevel(namedChildren(n).filter((c) => c !== field(n, 'name') && c !== field(n, 'condition')));
          break;
        case 'expression_statement':
          // Top-level `enum {…};` and similar appear as expression statements after parse errors.
          this.enums(n);
          break;
        default:
          break;
      }
    }
  }

  /** `typedef double real;`: the name stands for the type wherever it declares data. */
  private typedef(n: Node): void {
    const type = field(n, 'type')?.text;
    if (!type || this.types.typeOf(type).name === 'unknown') return;
    for (const d of n.childrenForFieldName('declarator')) {
      if (d?.type === 'type_identifier') this.types.set(d.text, type);
    }
  }

  /** A template: its type parameters stand for the types of its instantiations while it is read. */
  private template(n: Node): void {
    this.templateUses ??= new TemplateUses(this.root!);
    const binding = this.templateUses.bind(n, this.types);
    for (const [name, type] of binding.types) this.types.set(name, type);
    this.templateNotes.push(binding.notes);
    try {
      this.topLevel(namedChildren(n).filter((c) => c !== field(n, 'parameters')));
    } finally {
      this.templateNotes.pop();
      for (const name of binding.types.keys()) this.types.delete(name);
    }
  }

  private globalDeclaration(n: Node): void {
    this.enums(n);
    for (const { decl } of readDeclaration(n, 'global', this.exprs)) {
      this.model.globals.push(decl);
      this.bind(decl);
    }
  }

  /** `enum { NX = 600, NY = 400 };` gives constant bindings; implicit values count up from the previous one. */
  private enums(n: Node): void {
    for (const list of n.descendantsOfType('enumerator_list')) {
      if (!list) continue;
      let next: S.Expr = S.num(0);
      for (const e of namedChildren(list).filter((c) => c.type === 'enumerator')) {
        const name = field(e, 'name')?.text;
        const valueNode = field(e, 'value');
        const value = valueNode ? toSymbolic(this.exprs.value(valueNode)) : next;
        if (name && value) {
          this.model.bindings.set(name, value);
          next = S.add(value, S.num(1));
        }
      }
    }
  }

  private procedure(n: Node): void {
    let decl = field(n, 'declarator');
    while (decl && decl.type !== 'function_declarator') decl = field(decl, 'declarator') ?? namedChildren(decl)[0];
    if (!decl) return;
    const nameNode = field(decl, 'declarator');
    const mark = this.undo.length;
    this.depth++;
    try {
      this.procedureBody(n, decl, nameNode);
    } finally {
      this.depth--;
      // Back to the names in scope before the function, newest change undone first.
      while (this.undo.length > mark) {
        const [name, before] = this.undo.pop()!;
        if (before === undefined) this.scope.delete(name);
        else this.scope.set(name, before);
      }
    }
  }

  /** Puts a name in scope; inside a function, what it hides is logged so the function's end restores it. */
  private bind(d: Declaration): void {
    if (this.depth > 0) this.undo.push([d.name, this.scope.get(d.name)]);
    this.scope.set(d.name, d);
  }

  private procedureBody(n: Node, decl: Node, nameNode: Node | undefined): void {
    const name = nameNode?.text ?? '?';
    this.locals = [];
    const params: Declaration[] = [];
    for (const p of namedChildren(field(decl, 'parameters') ?? decl)) {
      if (p.type !== 'parameter_declaration') continue;
      for (const { decl: d } of readDeclaration(p, 'param', this.exprs)) {
        params.push(d);
        this.bind(d);
      }
    }
    const body = this.stmts.block(field(n, 'body'));
    const proc: Procedure = {
      name,
      range: rangeOf(n),
      nameRange: rangeOf(nameNode ?? n),
      params,
      locals: this.locals,
      body,
      bindings: new Map(),
    };
    const notes = this.templateNotes.flat();
    if (notes.length > 0) proc.assumptions = notes;
    this.model.procedures.push(proc);
  }

  /** Object-like macros with an integer body become bindings; floating literals become typed constants. */
  private bindMacros(): void {
    for (const m of this.macros.objects.values()) {
      if (m.body === '') continue;
      const lit = numberLiteral(m.body.replace(/^\((.*)\)$/, '$1'));
      if (lit.kind === 'num' && lit.isFloat && /^[-+]?[\d.]/.test(m.body.replace(/^\(/, ''))) {
        this.model.floatConstants.set(m.name, floatType(lit.bytes ?? 8));
        continue;
      }
      const tree = this.exprs.parseStandalone(m.body);
      if (tree) this.model.bindings.set(m.name, tree);
    }
  }

  /**
   * Literal or constant initialisations bind a name when nothing assigns it again: `const int
   * n = 512;`, or `int nx = NX;` never reassigned. A reassigned variable is not a constant.
   */
  private bindLiteralInitialisations(): void {
    const assigned = new Map<string, number>();
    for (const p of this.model.procedures) {
      walkStatements(p.body, (s) => {
        if (s.kind === 'assign' && s.target.kind === 'var') assigned.set(s.target.name, (assigned.get(s.target.name) ?? 0) + 1);
      });
    }
    for (const g of this.model.globals) {
      if (g.init && (g.isConst || !assigned.has(g.name))) this.model.bindings.set(g.name, g.init);
    }
    for (const p of this.model.procedures) {
      const local = new Map<string, number>();
      walkStatements(p.body, (s) => {
        if (s.kind === 'assign' && s.target.kind === 'var') local.set(s.target.name, (local.get(s.target.name) ?? 0) + 1);
      });
      for (const d of p.locals) {
        if (d.init && (d.isConst || (local.get(d.name) ?? 0) <= 1)) p.bindings.set(d.name, d.init);
      }
      // Sizes read from argv or the environment with a constant default: the default, said.
      for (const d of inputDefaults(p, local)) {
        if (p.bindings.has(d.name)) continue;
        p.bindings.set(d.name, d.value);
        p.assumptions = [...(p.assumptions ?? []), d.note];
      }
    }
  }
}

function floatType(bytes: number): ElementType {
  return { name: bytes === 4 ? 'float' : bytes === 16 ? 'long double' : 'double', bytes, isFloat: true };
}
