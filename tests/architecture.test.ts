/**
 * Architecture invariants (DEVELOPERS.md): the analysis core does no I/O and knows nothing of
 * editors or protocols, so the CLI, the language server and the tests share one pure entry point;
 * the language server does not import the CLI, and the I/O both share (server/src/host) imports
 * neither of them.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { dirname, join, relative, resolve, sep } from 'node:path';
import { describe, expect, it } from 'vitest';

const SRC = join(__dirname, '..', 'server', 'src');
const CORE = join(SRC, 'core');
const CLI = join(SRC, 'cli');
const LSP = join(SRC, 'lsp');
const HOST = join(SRC, 'host');
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

/** Every module specifier a file names: static imports and re-exports, `import()` and `require()`. */
function specifiers(text: string): string[] {
  const found = [
    ...text.matchAll(/^\s*(?:import|export)\s+(?:type\s+)?[^'";]*?from\s+['"]([^'"]+)['"]/gm),
    ...text.matchAll(/^\s*import\s+['"]([^'"]+)['"]/gm),
    ...text.matchAll(/\b(?:import|require)\(\s*['"]([^'"]+)['"]\s*\)/g),
  ];
  return found.map((m) => m[1]);
}

/** The folders under server/src that a file's relative imports resolve into. */
function importsInto(file: string, dir: string): string[] {
  return specifiers(readFileSync(file, 'utf8'))
    .filter((spec) => spec.startsWith('.'))
    .filter((spec) => {
      const target = resolve(dirname(file), spec);
      return target === dir || target.startsWith(dir + sep);
    });
}

describe('layer invariants: lsp does not import cli; host imports neither', () => {
  const lsp = sources(LSP);
  const host = sources(HOST);
  it('finds the lsp and host sources', () => {
    expect(lsp.length).toBeGreaterThan(10);
    expect(host.map((f) => relative(HOST, f)).sort()).toEqual(expect.arrayContaining(['compileDb.ts', 'files.ts', 'machines.ts']));
  });
  it('the check sees an import into cli/', () => {
    const spec = specifiers("import { x } from '../../cli/files';\nexport { y } from './z';\nconst m = await import('../cli/main');");
    expect(spec).toEqual(['../../cli/files', './z', '../cli/main']);
  });
  for (const file of lsp) {
    it(`lsp/${relative(LSP, file)} imports nothing from server/src/cli`, () => {
      expect(importsInto(file, CLI)).toEqual([]);
    });
  }
  for (const file of host) {
    it(`host/${relative(HOST, file)} imports nothing from server/src/cli or server/src/lsp`, () => {
      expect(importsInto(file, CLI)).toEqual([]);
      expect(importsInto(file, LSP)).toEqual([]);
    });
  }
});
