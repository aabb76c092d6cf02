// End-to-end run of the packaged extension in a real VS Code host: code-server (from npm, in the
// tool directory scripts/install-editor-hosts.sh fills) with the .vsix installed, the driver
// extension beside it, and Debian's Chromium driven by playwright-core. Prints one JSON object:
// the driver's observations, the text of the hover the browser showed, and the screenshot path.
//
// Usage: node tests/e2e/code-server/run.mjs <extension.vsix> <screenshot.png>
// Env:   OFFLOAD_LEDGER_TOOLS (default ~/.cache/offload-ledger-tools), CHROMIUM (default /usr/bin/chromium)
import { execFileSync, spawn } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { homedir, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium } from 'playwright-core';

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..', '..', '..');
const [vsix, shot] = process.argv.slice(2);
const tools = process.env.OFFLOAD_LEDGER_TOOLS || join(homedir(), '.cache', 'offload-ledger-tools');
const codeServer = join(tools, 'code-server', 'node_modules', '.bin', 'code-server');
const browserPath = process.env.CHROMIUM || '/usr/bin/chromium';
const log = (m) => process.stderr.write(`[code-server e2e] ${m}\n`);

const freePort = () =>
  new Promise((resolve, reject) => {
    const s = createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const { port } = s.address();
      s.close(() => resolve(port));
    });
  });

async function waitUntil(what, probe, timeoutMs) {
  const t0 = Date.now();
  for (;;) {
    if (await probe()) return Date.now() - t0;
    if (Date.now() - t0 > timeoutMs) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

const work = mkdtempSync(join(tmpdir(), 'offload-ledger-cs-'));
// code-server writes config and data under HOME and XDG folders: keep them inside the run.
const env = {
  ...process.env,
  HOME: join(work, 'home'),
  XDG_CONFIG_HOME: join(work, 'home', '.config'),
  XDG_DATA_HOME: join(work, 'home', '.local', 'share'),
  XDG_CACHE_HOME: join(work, 'home', '.cache'),
};
const userDir = join(work, 'user');
const extDir = join(work, 'ext');
const ws = join(work, 'ws');
for (const d of [env.HOME, join(userDir, 'User'), extDir, ws]) mkdirSync(d, { recursive: true });
for (const f of ['hall_naive_acc.c', 'hall_stale_acc.c']) cpSync(join(root, 'examples', 'hall', f), join(ws, f));
writeFileSync(
  join(userDir, 'User', 'settings.json'),
  JSON.stringify({
    'workbench.startupEditor': 'none',
    'workbench.tips.enabled': false,
    'security.workspace.trust.enabled': false,
    'telemetry.telemetryLevel': 'off',
    'extensions.autoCheckUpdates': false,
    'extensions.autoUpdate': false,
    'update.mode': 'none',
    'editor.hover.delay': 100,
    'window.restoreWindows': 'none',
    'chat.commandCenter.enabled': false,
    'workbench.enableExperiments': false,
  }),
);
const port = await freePort();
const config = join(work, 'config.yaml');
writeFileSync(config, `bind-addr: 127.0.0.1:${port}\nauth: none\ncert: false\n`);
const cs = [codeServer, '--config', config, '--user-data-dir', userDir, '--extensions-dir', extDir];

let server;
let context;
const result = { ok: false };
try {
  log(`installing ${vsix}`);
  execFileSync(cs[0], [...cs.slice(1), '--install-extension', vsix], { env, stdio: ['ignore', 'pipe', 'inherit'] });
  // The driver is a folder: code-server picks it up when extensions.json is rebuilt by a rescan.
  cpSync(join(here, 'driver'), join(extDir, 'offload-ledger-tests.offload-ledger-e2e-driver-0.0.1'), { recursive: true });
  rmSync(join(extDir, 'extensions.json'), { force: true });

  const resultFile = join(work, 'driver-result.json');
  server = spawn(cs[0], [...cs.slice(1), '--disable-telemetry', '--disable-update-check', '--disable-workspace-trust', ws], {
    env: { ...env, E2E_RESULT: resultFile, E2E_WS: ws },
    stdio: ['ignore', 'pipe', 'pipe'],
    detached: true,
  });
  const serverLog = [];
  server.stdout.on('data', (b) => serverLog.push(b.toString()));
  server.stderr.on('data', (b) => serverLog.push(b.toString()));
  const url = `http://127.0.0.1:${port}`;
  await waitUntil('code-server health', async () => (await fetch(`${url}/healthz`).catch(() => undefined))?.ok, 60000);
  log(`code-server up on ${url}`);

  const udd = join(work, 'chromium');
  context = await chromium.launchPersistentContext(udd, {
    executablePath: browserPath,
    headless: true,
    viewport: { width: 1400, height: 900 },
    args: ['--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--disable-quic'],
  });
  const page = context.pages()[0] ?? (await context.newPage());
  await page.goto(`${url}/?folder=${encodeURIComponent(ws)}`);
  await page.waitForSelector('.monaco-workbench', { timeout: 90000 });
  log('workbench loaded');
  await waitUntil('the driver result', () => existsSync(resultFile), 180000);
  result.driver = JSON.parse(readFileSync(resultFile, 'utf8'));
  log(`driver finished: ok=${result.driver.ok}`);

  // The planning view the driver opened, as a person sees it.
  mkdirSync(dirname(shot), { recursive: true });
  const planningShot = join(dirname(shot), 'code-server-planning.png');
  await page.locator('.tabs-container .tab', { hasText: 'Planning' }).first().waitFor({ timeout: 20000 });
  await page.waitForTimeout(1000);
  await page.screenshot({ path: planningShot });
  result.planningScreenshot = planningShot;
  // The view's source links: the time loop's path:line is a command link (the page runs no
  // script); following it opens that line in an editor, which the status bar's cursor shows.
  const webview = page.frameLocator('iframe.webview.ready').frameLocator('iframe#active-frame');
  await webview.locator('a.src', { hasText: 'hall_naive_acc.c:116' }).first().click();
  await page.locator('.tabs-container .tab.active', { hasText: 'hall_naive_acc.c' }).first().waitFor({ timeout: 20000 });
  await waitUntil('the cursor at the linked line', async () => /Ln 116,/.test(await page.locator('.statusbar-item', { hasText: /Ln \d+, Col \d+/ }).first().innerText().catch(() => '')), 20000);
  result.planningLink = await page.locator('.statusbar-item', { hasText: /Ln \d+, Col \d+/ }).first().innerText();
  // A roofline point is an SVG link with the same kind of command: it opens its nest's line.
  // The largest point comes last in Vega's drawing order of equal marks; take the last so nothing is drawn over it.
  const point = webview.locator('svg[aria-label^="roofline"] g.layer_2_marks a').last();
  const pointHref = decodeURIComponent((await point.getAttribute('xlink:href')) ?? '');
  const [, pointLine] = JSON.parse(pointHref.slice(pointHref.indexOf('?') + 1));
  // A real click at the point (the webview turns clicks on links into commands; other marks may overlap it, hence force).
  await point.locator('path').first().click({ force: true });
  await waitUntil('the cursor at the point\'s line', async () => new RegExp(`Ln ${pointLine},`).test(await page.locator('.statusbar-item', { hasText: /Ln \d+, Col \d+/ }).first().innerText().catch(() => '')), 20000);
  result.planningPoint = { href: pointHref, line: pointLine, status: await page.locator('.statusbar-item', { hasText: /Ln \d+, Col \d+/ }).first().innerText() };
  await page.locator('.tabs-container .tab', { hasText: 'Planning' }).first().locator('.codicon-close').click({ force: true });

  // A person's view of a hover: open the naive port from the explorer, go to the pressure nest,
  // hover its `for` keyword. Keys go to the focused editor, so the editor is clicked first.
  await page.locator('.explorer-folders-view .monaco-list-row', { hasText: 'hall_naive_acc.c' }).first().click();
  await page.locator('.tabs-container .tab.active', { hasText: 'hall_naive_acc.c' }).first().waitFor({ timeout: 20000 });
  await page.locator('.editor-group-container.active .monaco-editor .view-lines').first().click();
  await page.keyboard.press('Control+G');
  await page.waitForSelector('.quick-input-widget input', { state: 'visible', timeout: 10000 });
  await page.keyboard.type('121');
  await page.keyboard.press('Enter');
  // Monaco renders spaces as no-break spaces, which \s matches.
  const line = page.locator('.monaco-editor .view-line', { hasText: /for\s*\(int\s+k\s*=\s*2;\s*k\s*<\s*NZ/ }).first();
  await line.waitFor({ timeout: 20000 });
  const hover = page.locator('.monaco-hover', { hasText: 'Loop nest at line 121' }).first();
  for (let i = 0; i < 5; i++) {
    await line.locator('span span', { hasText: /^for$/ }).first().hover();
    try {
      await hover.waitFor({ state: 'visible', timeout: 10000 });
      break;
    } catch {
      await page.mouse.move(5, 5);
    }
  }
  result.hoverText = await hover.innerText();
  await page.screenshot({ path: shot });
  result.screenshot = shot;
  result.ok = !!result.driver?.ok;
  if (!result.ok) result.serverLog = serverLog.join('').slice(-4000);
} catch (e) {
  result.error = String(e?.stack ?? e);
  try {
    const page = context?.pages()[0];
    if (page && shot) await page.screenshot({ path: shot.replace(/\.png$/, '-failure.png') });
  } catch {}
} finally {
  await context?.close().catch(() => undefined);
  // code-server starts its own children (extension host, file watcher): end the whole group it leads.
  if (server?.pid) {
    try {
      process.kill(-server.pid, 'SIGTERM');
    } catch {}
  }
  rmSync(work, { recursive: true, force: true });
}
process.stdout.write(JSON.stringify(result) + '\n');
process.exit(result.ok ? 0 : 1);
