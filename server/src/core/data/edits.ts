/** Applies line insertions (`{ line, text }`, each before a 1-based line of the original text). */
export interface LineEdit {
  line: number;
  text: string;
}

export function applyLineEdits(text: string, edits: readonly LineEdit[]): string {
  const lines = text.split('\n');
  const before = new Map<number, string[]>();
  for (const e of edits) before.set(e.line, [...(before.get(e.line) ?? []), e.text]);
  const out: string[] = [];
  lines.forEach((l, k) => {
    out.push(...(before.get(k + 1) ?? []));
    out.push(l);
  });
  // Edits past the last line go at the end (before the final newline's empty remainder).
  for (const [line, texts] of before) if (line > lines.length) out.splice(out.length - (lines[lines.length - 1] === '' ? 1 : 0), 0, ...texts);
  return out.join('\n');
}

/**
 * Applies text edits (0-based ranges) the way an LSP client does: all ranges refer to the
 * original text; edits at the same position apply in the order given.
 */
export function applyTextEdits(text: string, edits: readonly import('../types').TextEdit[]): string {
  const lineStarts = [0];
  for (let i = 0; i < text.length; i++) if (text[i] === '\n') lineStarts.push(i + 1);
  const offset = (p: import('../types').Pos): number => Math.min(text.length, (lineStarts[p.line] ?? text.length) + p.col);
  const indexed = edits.map((e, k) => ({ start: offset(e.range.start), end: offset(e.range.end), text: e.newText, k }));
  indexed.sort((a, b) => b.start - a.start || b.k - a.k);
  let out = text;
  for (const e of indexed) out = out.slice(0, e.start) + e.text + out.slice(e.end);
  return out;
}
