/**
 * Where finding codes are documented: docs/lsp/codes.md, shipped beside the server in the
 * repository and inside the .vsix, linked as a file URL so no network is needed to read it.
 */
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';

export const CODES_PAGE = join('docs', 'lsp', 'codes.md');

/** Searches upward from `start` (the server's own directory) for the codes page. */
export function findCodesPage(start: string): string | undefined {
  let dir = start;
  for (let i = 0; i < 6; i++) {
    const candidate = join(dir, CODES_PAGE);
    if (existsSync(candidate)) return pathToFileURL(candidate).href;
    const up = dirname(dir);
    if (up === dir) break;
    dir = up;
  }
  return undefined;
}

export function codesHref(start: string): string {
  // Without the page (a server copied alone), the link still names the page by its repository path.
  return findCodesPage(start) ?? CODES_PAGE.replace(/\\/g, '/');
}
