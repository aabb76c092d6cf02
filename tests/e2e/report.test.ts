/**
 * The planning report of the demo (`check --format html examples`) opened in Chromium from a
 * file: every request the page makes is recorded and refused, screenshots of the summary and of
 * the roofline are kept in tests/artifacts/ (git-ignored, for a person to look at), and a
 * roofline point followed as a link lands on its table row. Runs when OFFLOAD_LEDGER_E2E=1 and
 * Chromium is installed (scripts/install-editor-hosts.sh), and skips, saying why, otherwise.
 */
import { existsSync, mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { ROOT, runCli } from '../helpers';

const browserPath = process.env.CHROMIUM || '/usr/bin/chromium';
const reason = process.env.OFFLOAD_LEDGER_E2E !== '1'
  ? 'set OFFLOAD_LEDGER_E2E=1 to run it (.ci/run runs it with the tools of scripts/install-editor-hosts.sh)'
  : !existsSync(browserPath)
    ? `chromium not found at ${browserPath} (apt-get install chromium)`
    : '';
if (reason) console.log(`report e2e skipped: ${reason}`);

describe.skipIf(!!reason)('the planning report in Chromium', () => {
  it('loads nothing but itself, draws its charts, and links points to their rows', async () => {
    const html = runCli(['check', '--format', 'html', 'examples']).stdout;
    const dir = mkdtempSync(join(tmpdir(), 'offload-ledger-report-'));
    const file = join(dir, 'report.html');
    writeFileSync(file, html);
    const page0 = pathToFileURL(file).href;
    const artifacts = join(ROOT, 'tests', 'artifacts');
    mkdirSync(artifacts, { recursive: true });

    const browser = await chromium.launch({ executablePath: browserPath, args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update'] });
    try {
      const page = await browser.newPage({ viewport: { width: 1400, height: 1000 } });
      const requests: string[] = [];
      // Every request but the page itself is recorded and refused: the report must need none.
      await page.route('**/*', (route) => {
        const url = route.request().url();
        if (url === page0) return route.continue();
        requests.push(url);
        return route.abort();
      });
      page.on('request', (r) => {
        if (r.url() !== page0 && !requests.includes(r.url())) requests.push(r.url());
      });
      await page.goto(page0, { waitUntil: 'load' });
      expect(requests).toEqual([]);

      // The charts take room on the page: the roofline is drawn, not an empty box.
      const charts = await page.locator('svg.marks').count();
      expect(charts).toBeGreaterThanOrEqual(3);
      const roofline = page.locator('svg[aria-label^="roofline"]');
      const box = (await roofline.boundingBox())!;
      expect(box.width).toBeGreaterThan(500);
      expect(box.height).toBeGreaterThan(300);
      await page.screenshot({ path: join(artifacts, 'report-summary.png') });
      await roofline.screenshot({ path: join(artifacts, 'report-roofline.png') });

      // A roofline point is a link to its row in the nest table: following it selects that row.
      const link = page.locator('svg[aria-label^="roofline"] a').first();
      const href = await link.getAttribute('xlink:href');
      expect(href).toMatch(/^#N\d+$/);
      await link.dispatchEvent('click');
      await page.waitForFunction((h) => (globalThis as unknown as { location: { hash: string } }).location.hash === h, href);
      expect(await page.locator(`tr${href}`).count()).toBe(1);
      expect(new URL(page.url()).hash).toBe(href);
      expect(requests).toEqual([]);
    } finally {
      await browser.close();
    }
  }, 120_000);
});
