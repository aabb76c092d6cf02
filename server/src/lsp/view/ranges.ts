/**
 * The one place where core ranges (0-based line and column, column in UTF-16 code units as
 * web-tree-sitter reports them for JavaScript strings) become LSP ranges, and where the core's
 * line insertions become LSP text edits.
 */
import type { Position, Range, TextEdit } from 'vscode-languageserver-protocol';
import type { Range as CoreRange, TextEdit as CoreTextEdit } from '../../core/types';
import type { LineEdit } from '../../core/data/edits';

export function toLspRange(r: CoreRange): Range {
  return { start: { line: r.start.line, character: r.start.col }, end: { line: r.end.line, character: r.end.col } };
}

export function toLspEdit(e: CoreTextEdit): TextEdit {
  return { range: toLspRange(e.range), newText: e.newText };
}

export function sameRange(a: CoreRange, b: CoreRange): boolean {
  return a.start.line === b.start.line && a.start.col === b.start.col && a.end.line === b.end.line && a.end.col === b.end.col;
}

export function containsRange(outer: CoreRange, inner: CoreRange): boolean {
  return before(outer.start, inner.start) && before(inner.end, outer.end);
}

function before(a: { line: number; col: number }, b: { line: number; col: number }): boolean {
  return a.line < b.line || (a.line === b.line && a.col <= b.col);
}

export function containsPosition(r: Range, p: Position): boolean {
  const afterStart = p.line > r.start.line || (p.line === r.start.line && p.character >= r.start.character);
  const beforeEnd = p.line < r.end.line || (p.line === r.end.line && p.character < r.end.character);
  return afterStart && beforeEnd;
}

export function overlaps(a: Range, b: Range): boolean {
  const aEndsBeforeB = a.end.line < b.start.line || (a.end.line === b.start.line && a.end.character < b.start.character);
  const bEndsBeforeA = b.end.line < a.start.line || (b.end.line === a.start.line && b.end.character < a.start.character);
  return !aEndsBeforeB && !bEndsBeforeA;
}

/**
 * Line insertions (`{ line, text }`, before a 1-based line; core/data/edits.ts) as LSP edits with
 * the same result as `applyLineEdits`: insertions at one line keep their order, and lines past
 * the end go after the last line (before a final empty remainder).
 */
export function lineInsertionsToEdits(text: string, edits: readonly LineEdit[]): TextEdit[] {
  const lines = text.split('\n');
  const byLine = new Map<number, string[]>();
  for (const e of edits) byLine.set(e.line, [...(byLine.get(e.line) ?? []), e.text]);
  const out: TextEdit[] = [];
  for (const [line, texts] of [...byLine].sort((a, b) => a[0] - b[0])) {
    if (line >= 1 && line <= lines.length) {
      out.push({ range: point(line - 1, 0), newText: texts.map((t) => `${t}\n`).join('') });
    } else if (lines[lines.length - 1] === '') {
      out.push({ range: point(lines.length - 1, 0), newText: texts.map((t) => `${t}\n`).join('') });
    } else {
      const last = lines.length - 1;
      out.push({ range: point(last, lines[last].length), newText: texts.map((t) => `\n${t}`).join('') });
    }
  }
  return out;
}

function point(line: number, character: number): Range {
  return { start: { line, character }, end: { line, character } };
}
