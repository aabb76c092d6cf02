/**
 * Architecture invariants (DEVELOPERS.md): the analysis core does no I/O and knows nothing of
 * editors or protocols, so the CLI, the language server and the tests share one pure entry point.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const CORE = join(__dirname, '..', 'server', 'src', 'core');
const forbidden = /^(node:|fs$|path$|child_process$|os$|vscode|vscode-languageserver|vscode-languageclient|worker_threads$|http|net$)/;

function sources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? sources(join(dir, e.name)) : e.name.endsWith('.ts') ? [join(dir, e.name)] : [],
  );
}

describe('core invariants', () => {
  const files = sources(CORE);
  it('finds the core sources', () => expect(files.length).toBeGreaterThan(10));
  for (const file of files) {
    it(`${file.slice(CORE.length + 1)} imports no I/O, process, LSP or VS Code module`, () => {
      const text = readFileSync(file, 'utf8');
      const imports = [...text.matchAll(/^\s*import\s+(type\s+)?[^'"]*?from\s+['"]([^'"]+)['"]/gm)];
      for (const m of imports) {
        const typeOnly = !!m[1];
        const spec = m[2];
        expect(forbidden.test(spec), `${spec}`).toBe(false);
        // The tree-sitter runtime is passed in by the caller; the core may name its types only.
        if (spec === 'web-tree-sitter') expect(typeOnly, 'web-tree-sitter must be imported with `import type`').toBe(true);
      }
      expect(/\brequire\(/.test(text)).toBe(false);
    });
  }
});
