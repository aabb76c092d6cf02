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
