/**
 * Path arithmetic for the compilation database, without `node:path` (the core does no I/O and
 * runs the same on every platform). Paths are kept with forward slashes; a Windows drive letter
 * (`C:/`) or a UNC prefix (`//server/`) counts as absolute, as it does for the compilers that
 * write these databases.
 */

/** Forward slashes only, so that POSIX and Windows databases read the same. */
export function slashes(p: string): string {
  return p.replace(/\\/g, '/');
}

export function isAbsolutePath(p: string): boolean {
  const s = slashes(p);
  return s.startsWith('/') || /^[A-Za-z]:\//.test(s);
}

/** `.` and `..` segments removed and repeated slashes collapsed; `..` never climbs above the root. */
export function normalisePath(p: string): string {
  const s = slashes(p);
  const root = /^([A-Za-z]:)?\/\/?/.exec(s)?.[0] ?? '';
  const out: string[] = [];
  for (const part of s.slice(root.length).split('/')) {
    if (part === '' || part === '.') continue;
    if (part === '..') {
      if (out.length > 0 && out[out.length - 1] !== '..') out.pop();
      else if (!root) out.push('..');
      continue;
    }
    out.push(part);
  }
  const body = out.join('/');
  return root ? root + body : body === '' ? '.' : body;
}

/** `p` against `base` when it is relative, normalised. */
export function resolvePath(base: string, p: string): string {
  return normalisePath(isAbsolutePath(p) ? p : `${slashes(base)}/${p}`);
}

/** The folder holding `p` (`p` normalised first). */
export function folderOf(p: string): string {
  const s = normalisePath(p);
  const k = s.lastIndexOf('/');
  if (k < 0) return '.';
  return k === 0 ? '/' : /^[A-Za-z]:$/.test(s.slice(0, k)) ? s.slice(0, k + 1) : s.slice(0, k);
}

/** True when `p` is `folder` or lies inside it (both absolute). */
export function isInside(p: string, folder: string): boolean {
  const a = normalisePath(p);
  const f = normalisePath(folder);
  return a === f || a.startsWith(f.endsWith('/') ? f : `${f}/`);
}
