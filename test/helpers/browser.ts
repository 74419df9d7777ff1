/**
 * Driving Debian's Chromium for overlay tests: the launch flags the
 * developer notes give, and a watch on a page for requests that leave
 * 127.0.0.1 and for console errors.
 *
 * @example
 *   const browser = await launchChromium();
 *   const page = await browser.newPage();
 *   const seen = watchPage(page);
 *   // … expect(seen.offsite).toEqual([]); expect(seen.errors).toEqual([]);
 */
import { existsSync } from 'node:fs';
import { chromium, type Browser, type Page } from 'playwright-core';

export const CHROMIUM = '/usr/bin/chromium';
export const hasChromium = existsSync(CHROMIUM);
if (!hasChromium) process.stderr.write(`skipping the overlay's browser tests: no chromium at ${CHROMIUM} (Debian package chromium)\n`);

/** The suite's title, or the reason it is skipped, for the test report. */
export const browserSuite = (title: string): string =>
  hasChromium ? title : `${title} — skipped: no chromium at ${CHROMIUM} (install Debian's chromium: apt-get install chromium)`;

export const launchChromium = (): Promise<Browser> =>
  chromium.launch({
    executablePath: CHROMIUM,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
  });

export interface Watch {
  /** URLs the page asked for that are not on 127.0.0.1 (HTTP requests and WebSockets). */
  offsite: string[];
  /** Console errors and uncaught exceptions. */
  errors: string[];
}

export function watchPage(page: Page): Watch {
  const seen: Watch = { offsite: [], errors: [] };
  const check = (url: string): void => {
    const u = new URL(url);
    if (u.protocol !== 'data:' && u.hostname !== '127.0.0.1') seen.offsite.push(url);
  };
  page.on('request', (r) => check(r.url()));
  page.on('websocket', (ws) => check(ws.url()));
  page.on('console', (m) => {
    if (m.type() === 'error') seen.errors.push(m.text());
  });
  page.on('pageerror', (e) => seen.errors.push(e.message));
  return seen;
}
