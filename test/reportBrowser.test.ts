/**
 * The report in a real browser: Debian's Chromium (/usr/bin/chromium),
 * driven by playwright-core; never a downloaded browser. Checks that the page
 * loads offline without console errors or outside requests, that every
 * figure is drawn with a non-empty size, and saves screenshots (paths
 * printed) for a person to look at.
 *
 * Skipped, with a message, where Chromium is not installed; the full test
 * command (README) installs it: bash test/system/install-debian-packages.sh.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium, type BrowserContext } from 'playwright-core';
import { lossprobe, referenceRun, removeTemp, runTiny, tempDir, TINY } from './helpers/studyFixture.js';

const CHROMIUM = '/usr/bin/chromium';
const haveChromium = existsSync(CHROMIUM);
if (!haveChromium) console.warn(`reportBrowser.test.ts skipped: ${CHROMIUM} not found (install Debian's chromium: bash test/system/install-debian-packages.sh, as root)`);

const FLAGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

describe.skipIf(!haveChromium)('report.html in headless Chromium', () => {
  let browser: BrowserContext;
  let profile: string;
  const shots = mkdtempSync(join(tmpdir(), 'lp-report-shots-'));
  beforeAll(async () => {
    profile = mkdtempSync(join(tmpdir(), 'lp-chromium-profile-'));
    // A persistent context is how playwright takes a fresh --user-data-dir.
    browser = await chromium.launchPersistentContext(profile, { executablePath: CHROMIUM, headless: true, args: FLAGS, viewport: { width: 1200, height: 900 } });
  });
  afterAll(async () => {
    await browser?.close();
    rmSync(profile, { recursive: true, force: true });
    removeTemp();
    console.log(`report screenshots kept in ${shots}`);
  });

  /** `svgDir`: where the page's figures are saved as files (a run folder's figures/, or the preview folder itself). */
  async function check(folder: string, name: string, svgDir = join(folder, 'figures')): Promise<void> {
    const page = await browser.newPage();
    const problems: string[] = [];
    page.on('console', (m) => m.type() === 'error' && problems.push(`console: ${m.text()}`));
    page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
    page.on('request', (r) => !/^(file|data|about):/.test(r.url()) && problems.push(`outside request: ${r.url()}`));
    await page.goto(pathToFileURL(join(folder, 'report.html')).href, { waitUntil: 'load' });
    const figures = await page.$$eval('figure.fig', (els) =>
      els.map((el) => {
        const svg = el.querySelector('svg');
        const box = svg?.getBoundingClientRect();
        return { file: el.getAttribute('data-file'), width: box?.width ?? 0, height: box?.height ?? 0, marks: svg?.querySelectorAll('path, rect, line, text').length ?? 0 };
      }),
    );
    const files = readdirSync(svgDir).filter((f) => f.endsWith('.svg')).sort();
    expect(figures.map((f) => f.file).sort()).toEqual(files);
    for (const f of figures) {
      expect(f.width, f.file!).toBeGreaterThan(100);
      expect(f.height, f.file!).toBeGreaterThan(100);
      expect(f.marks, f.file!).toBeGreaterThan(10);
    }
    // The cautions are on screen without scrolling past the results.
    const cautions = await page.locator('#cautions').boundingBox();
    expect(cautions && cautions.y < 900).toBe(true);
    const path = join(shots, `${name}.png`);
    await page.screenshot({ path, fullPage: true });
    for (const id of await page.$$eval('section[id]', (els) => els.map((e) => e.id))) await page.locator(`#${id}`).screenshot({ path: join(shots, `${name}-${id}.png`) });
    console.log(`screenshot: ${path}`);
    expect(problems).toEqual([]);
    await page.close();
  }

  it('shows a single-count recovery study', async () => {
    await check(referenceRun().folder, 'recovery');
  });

  it('shows a preview of the candidate observers', async () => {
    const folder = join(tempDir(), 'preview');
    const r = lossprobe(['preview', TINY, '--out', folder]);
    expect(r.status, r.stderr).toBe(0);
    await check(folder, 'preview', folder);
  });

  it('shows a trial-count sweep', async () => {
    const folder = join(tempDir(), 'sweep');
    const r = runTiny(folder, ['--workers', '1', '--trials', '60,120']);
    expect(r.status, r.stderr).toBe(0);
    await check(folder, 'sweep');
  });
});
