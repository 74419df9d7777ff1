import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { copyFileSync, existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import type { Browser, Page } from 'playwright-core';
import { CAUTION } from '../../../../core/report.js';
import { browserSuite, hasChromium, launchChromium } from '../../../helpers/browser.js';
import { CLI, PIECES, QUOTE, ROOT, cli, reviewWorld, type ReviewWorld } from '../../../helpers/review-session.js';

const ARTIFACTS = join(ROOT, 'test/artifacts');

/** Opens a page from disk, noting every request it makes and every console error. */
async function open(browser: Browser, file: string): Promise<{ page: Page; requests: string[]; errors: string[] }> {
  const page = await browser.newPage({ viewport: { width: 1100, height: 900 } });
  const requests: string[] = [];
  const errors: string[] = [];
  page.on('request', (r) => requests.push(r.url()));
  page.on('console', (m) => m.type() === 'error' && errors.push(m.text()));
  page.on('pageerror', (e) => errors.push(e.message));
  await page.goto(pathToFileURL(file).href);
  return { page, requests, errors };
}

/** Self-contained: no src or href that leaves the file, no stylesheet or script fetched, no url() in CSS. */
const externalRefs = (html: string): string[] => html.match(/\b(?:src|href)\s*=\s*["']?[^"'\s>]*:\/\/[^"'\s>]*|url\(\s*["']?[a-z]+:|@import/gi) ?? [];

describe.skipIf(!hasChromium)(browserSuite('review and report pages in Chromium'), () => {
  let w: ReviewWorld;
  let browser: Browser;
  let review: string;
  let report: string;

  beforeAll(async () => {
    if (!existsSync(CLI)) throw new Error(`${CLI} is missing: build first with "npx tsc -p tsconfig.json" (npm test does)`);
    w = reviewWorld();
    const baseline = join(w.dir, 'baseline.json');
    writeFileSync(baseline, cli(['baseline', '--corpus', w.corpus, '--samples', '3', '--json']).stdout);
    review = join(w.dir, 'review.html');
    const r = cli(['review', '1', '--log', w.log, '--html', review, '--baseline', baseline]);
    expect(r.code, r.stderr).toBe(0);
    const [a, b] = [join(w.dir, 'ckpt-1'), join(w.dir, 'ckpt-2')];
    mkdirSync(a);
    mkdirSync(b);
    copyFileSync(join(w.corpus, PIECES[0].file), join(a, 'copy.mid'));
    expect(cli(['review', '1', '--log', w.log, '--midi', join(b, 'take.mid')])).toMatchObject({ code: 0 });
    report = join(w.dir, 'report.html');
    expect(cli(['report', a, b, '--corpus', w.corpus, '--html', report, '--baseline', baseline])).toMatchObject({ code: 0 });
    browser = await launchChromium();
  });
  afterAll(async () => {
    await browser?.close();
    if (w) rmSync(w.dir, { recursive: true, force: true });
  });

  it('the review opens without console errors or requests, and shows the warnings, caution and pairs', async () => {
    const html = readFileSync(review, 'utf8');
    expect(externalRefs(html)).toEqual([]);
    expect(html).not.toMatch(/<script|<link|<img/i);
    const { page, requests, errors } = await open(browser, review);
    try {
      const rows = page.locator('table.warnings tbody tr');
      expect(await rows.count()).toBe(1);
      await expect(rows.first().isVisible()).resolves.toBe(true);
      const cells = await rows.first().locator('td').allInnerTexts();
      // #, time from the start, bar:beat, piece, score, transposition, where in the piece, cleared. The pieces carry no
      // time signature, so they count in 4/4: session beat 16 is bar 5, beat 1; the piece's beat 8 is its bar 3, beat 1.
      expect(cells[2]).toBe('5:1');
      expect(cells[3]).toContain(PIECES[QUOTE.piece].title);
      expect(cells.slice(4, 7)).toEqual(['0.940', `${QUOTE.transposition} semitones up`, '3:1']);
      expect(await page.locator('.caution').innerText()).toContain(CAUTION);
      await expect(page.locator('svg[aria-label="window scores over the session"]').isVisible()).resolves.toBe(true);
      const first = page.locator('#worst-1');
      expect(await first.locator('h3').innerText()).toContain(`bars 5:1–9:1 resemble “${PIECES[QUOTE.piece].title}” bars 3:1–7:1, ${QUOTE.transposition} semitones up`);
      // Matched notes are outlined solid, the others dashed: the marking does not rest on colour.
      const quotedNotes = PIECES[QUOTE.piece].notes.filter((n) => n.onset >= QUOTE.from && n.onset < QUOTE.to).length;
      const rolls = first.locator('svg');
      expect(await rolls.count()).toBe(2);
      for (let i = 0; i < 2; i++) {
        expect(await rolls.nth(i).locator('rect[stroke-dasharray]').count()).toBe(0);
        expect(await rolls.nth(i).locator('rect:has(title)').count()).toBe(quotedNotes);
      }
      const other = page.locator('#worst-2 svg').first();
      expect(await other.locator('rect[stroke-dasharray]').count()).toBeGreaterThan(0);
      mkdirSync(ARTIFACTS, { recursive: true });
      await page.screenshot({ path: join(ARTIFACTS, 'review-session.png'), fullPage: true });
      expect(errors).toEqual([]);
      expect(requests).toEqual([pathToFileURL(review).href]);
    } finally {
      await page.close();
    }
  });

  it('the report opens without console errors or requests, and draws the two folders as a series', async () => {
    const html = readFileSync(report, 'utf8');
    expect(externalRefs(html)).toEqual([]);
    const { page, requests, errors } = await open(browser, report);
    try {
      const points = page.locator('svg[aria-label="originality by folder"] .series-point');
      expect(await points.count()).toBe(2);
      for (let i = 0; i < 2; i++) await expect(points.nth(i).isVisible()).resolves.toBe(true);
      expect(await page.locator('table.queries tbody tr').count()).toBe(2);
      expect(await page.locator('.caution').innerText()).toContain(CAUTION);
      await page.screenshot({ path: join(ARTIFACTS, 'report-folders.png'), fullPage: true });
      expect(errors).toEqual([]);
      expect(requests).toEqual([pathToFileURL(report).href]);
    } finally {
      await page.close();
    }
  });
});
