/**
 * Paths in messages, without `node:path` (the core does no I/O): a file of the same check is
 * named relative to the file the message is about, so messages read the same on every machine
 * instead of showing a temporary or absolute folder.
 */
import { isInside, normalisePath, resolvePath } from './project/paths';

/**
 * How a message about `fromFile` names another file `to`: relative to the project root when both
 * lie inside it (the folder a check runs in, the editor's workspace folder), so one report names
 * each file one way; otherwise relative to `fromFile`'s folder.
 */
export function otherFileName(fromFile: string, to: string, root?: string): string {
  if (root) {
    // Paths as the user gave them are relative to the root (the folder the check runs in).
    const base = normalisePath(root);
    const f = resolvePath(base, fromFile);
    const t = resolvePath(base, to);
    if (isInside(f, base) && isInside(t, base)) return t.slice(base.replace(/\/+$/, '').length + 1);
  }
  return relativeToFile(fromFile, to);
}

/** `to` relative to the folder of `fromFile` (POSIX or Windows separators); `to` itself when they share no folder. */
export function relativeToFile(fromFile: string, to: string): string {
  const split = (p: string): string[] => p.replace(/\\/g, '/').split('/');
  const from = split(fromFile).slice(0, -1);
  const target = split(to);
  let k = 0;
  while (k < from.length && k < target.length - 1 && from[k] === target[k]) k++;
  if (k === 0 && (from[0] !== '' || target[0] !== '')) return to.replace(/\\/g, '/');
  const rel = [...from.slice(k).map(() => '..'), ...target.slice(k)].join('/');
  return rel.length < to.length ? rel : to.replace(/\\/g, '/');
}
