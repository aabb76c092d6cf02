/**
 * What the CLI prints on every fixture and example, scanned for the ways a message can mislead:
 * machine limits leaking as counts (2^53 and above), synthetic names of the model (`_i1`), a
 * speedup range that rounds to nothing (`0.00–0.00`), and "1 runs"-style plurals.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { formatFile } from '../server/src/cli/text';
import { ROOT, analyzeText } from './helpers';

const SOURCE = /\.(c|cpp|f90|F90|f)$/;
function sources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? sources(join(dir, e.name)) : SOURCE.test(e.name) ? [join(dir, e.name)] : [],
  );
}

describe('printed messages', () => {
  it('have no machine-limit numbers, synthetic names, empty ranges or wrong plurals', async () => {
    const files = [...sources(join(ROOT, 'examples')), ...sources(join(ROOT, 'tests', 'fixtures'))];
    expect(files.length).toBeGreaterThan(50);
    const problems: string[] = [];
    for (const f of files) {
      const text = formatFile(await analyzeText(readFileSync(f, 'utf8'), f));
      for (const line of text.split('\n')) {
        // 2^53 = 9,007,199,254,740,992: any 16-digit count is a limit, not a size (written with or without separators).
        if (/\d{16,}|\d{1,3}(,\d{3}){5,}/.test(line)) problems.push(`${f}: huge number: ${line.trim()}`);
        if (/\b_i\d+\b/.test(line)) problems.push(`${f}: synthetic name: ${line.trim()}`);
        if (/\b0\.00–0\.00×/.test(line)) problems.push(`${f}: empty range: ${line.trim()}`);
        if (/(?<![\d.,])1 (runs|loops|steps|transfers|elements|arrays|bytes|files|calls)\b/.test(line)) problems.push(`${f}: plural: ${line.trim()}`);
      }
    }
    expect(problems).toEqual([]);
  }, 300_000);
});
