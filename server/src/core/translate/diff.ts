/**
 * A small line-based unified diff (Myers' O(ND) shortest edit script), enough to show what a
 * translation changes. Output follows `diff -u`: `--- a`, `+++ b`, `@@ -l,n +l,n @@` hunks with
 * three lines of context.
 */

type Op = { kind: ' ' | '-' | '+'; text: string; a: number; b: number };

/** The shortest edit script between two line arrays, as a list of kept, removed and added lines. */
export function diffLines(a: string[], b: string[]): Op[] {
  const n = a.length;
  const m = b.length;
  const max = n + m;
  const offset = max + 1;
  const v = new Int32Array(2 * max + 3);
  const trace: Int32Array[] = [];
  let done = false;
  for (let d = 0; d <= max && !done; d++) {
    trace.push(v.slice());
    for (let k = -d; k <= d; k += 2) {
      let x = k === -d || (k !== d && v[offset + k - 1] < v[offset + k + 1]) ? v[offset + k + 1] : v[offset + k - 1] + 1;
      let y = x - k;
      while (x < n && y < m && a[x] === b[y]) { x++; y++; }
      v[offset + k] = x;
      if (x >= n && y >= m) { done = true; break; }
    }
  }
  // Walk the trace back from the end to recover the script.
  const ops: Op[] = [];
  let x = n;
  let y = m;
  for (let d = trace.length - 1; d >= 0; d--) {
    const vd = trace[d];
    const k = x - y;
    const prevK = k === -d || (k !== d && vd[offset + k - 1] < vd[offset + k + 1]) ? k + 1 : k - 1;
    const prevX = d === 0 ? 0 : vd[offset + prevK];
    const prevY = prevX - prevK;
    while (x > prevX && y > prevY) { x--; y--; ops.push({ kind: ' ', text: a[x], a: x, b: y }); }
    if (d === 0) break;
    if (x === prevX) { y--; ops.push({ kind: '+', text: b[y], a: x, b: y }); } else { x--; ops.push({ kind: '-', text: a[x], a: x, b: y }); }
    x = prevX;
    y = prevY;
  }
  while (x > 0 && y > 0) { x--; y--; ops.push({ kind: ' ', text: a[x], a: x, b: y }); }
  return ops.reverse();
}

/** `diff -u` text between two texts; empty when they are equal. */
export function unifiedDiff(before: string, after: string, nameA: string, nameB: string, context = 3): string {
  if (before === after) return '';
  const split = (s: string) => {
    const l = s.split(/\r?\n/);
    if (l.length > 0 && l[l.length - 1] === '') l.pop();
    return l;
  };
  const a = split(before);
  const b = split(after);
  const ops = diffLines(a, b);
  const out = [`--- ${nameA}`, `+++ ${nameB}`];
  let i = 0;
  while (i < ops.length) {
    if (ops[i].kind === ' ') { i++; continue; }
    // A hunk: from `context` lines before the change to `context` lines after the last change
    // that is no more than 2 * context kept lines from the next.
    let start = Math.max(0, i - context);
    let end = i;
    for (;;) {
      while (end < ops.length && ops[end].kind !== ' ') end++;
      let j = end;
      while (j < ops.length && ops[j].kind === ' ') j++;
      if (j < ops.length && j - end <= 2 * context) { end = j; continue; }
      end = Math.min(ops.length, end + context);
      break;
    }
    const hunk = ops.slice(start, end);
    const aStart = hunk.find((o) => o.kind !== '+')?.a ?? hunk[0].a;
    const bStart = hunk.find((o) => o.kind !== '-')?.b ?? hunk[0].b;
    const aLen = hunk.filter((o) => o.kind !== '+').length;
    const bLen = hunk.filter((o) => o.kind !== '-').length;
    out.push(`@@ -${aLen === 0 ? aStart : aStart + 1},${aLen} +${bLen === 0 ? bStart : bStart + 1},${bLen} @@`);
    for (const o of hunk) out.push(`${o.kind}${o.text}`);
    i = end;
    start = end;
  }
  return out.join('\n') + '\n';
}
