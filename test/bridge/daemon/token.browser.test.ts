/**
 * The overlay behind `--token`, in a real browser (Debian's Chromium
 * through playwright-core), against `node dist/bridge/cli.js listen --token`:
 * opened as `/?token=…`, the page loads its own script and style (the
 * cookie carries the token for them), opens /events with the token and
 * shows what is played; opened without it, the browser gets the 401 page
 * and no overlay.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { type SpawnedDaemon, ROOT, spawnDaemon } from '../../helpers/daemon.js';
import { browserSuite, hasChromium, launchChromium, watchPage } from '../../helpers/browser.js';
import { noteBytes, oscSender } from '../../helpers/proc.js';
import { join } from 'node:path';

const TOKEN = 'tablet-by-the-stage-7';

describe.skipIf(!hasChromium)(browserSuite('the overlay behind --token'), () => {
  let d: SpawnedDaemon;
  let browser: Browser;
  beforeAll(async () => {
    d = await spawnDaemon(['--corpus', join(ROOT, 'presets', 'demo', 'corpus'), '--preset', 'livecode', '--token', TOKEN]);
    browser = await launchChromium();
  });
  afterAll(async () => {
    await browser?.close();
    await d?.stop();
  });

  it('works opened with ?token=, with no console error', async () => {
    const page = await browser.newPage();
    const seen = watchPage(page);
    const refused: string[] = [];
    page.on('response', (r) => r.status() >= 400 && refused.push(`${r.status()} ${r.url()}`));
    await page.goto(`http://127.0.0.1:${d.http}/?token=${TOKEN}`);
    await expect.poll(() => page.locator('[role=status]').textContent(), { timeout: 10_000 }).toBe('waiting for input');
    const sender = oscSender(d.osc);
    await sender.send(noteBytes(60, 1));
    sender.close();
    await expect.poll(() => page.locator('[role=status]').textContent(), { timeout: 10_000 }).toBe('listening');
    expect(refused).toEqual([]);
    expect(seen.errors).toEqual([]);
    expect(seen.offsite).toEqual([]);
    await page.close();
  });

  it('opened without the token: the 401 page, no overlay', async () => {
    const context = await browser.newContext(); // no cookie from the test before
    const page = await context.newPage();
    const r = await page.goto(`http://127.0.0.1:${d.http}/`);
    expect(r!.status()).toBe(401);
    expect(await page.textContent('body')).toMatch(/this daemon asks for its --token/);
    expect(await page.locator('[role=status]').count()).toBe(0);
    await context.close();
  });
});
