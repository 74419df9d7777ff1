import { existsSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { UI_DIST } from '../helpers/fake-daemon.js';

// Okabe & Ito (2002), "Color Universal Design", as listed in shared/reference/check-values.md.
const OKABE_ITO = ['#000000', '#E69F00', '#56B4E9', '#009E73', '#F0E442', '#0072B2', '#D55E00', '#CC79A7'];

describe('the built overlay (ui/dist)', () => {
  const built = existsSync(UI_DIST);
  const read = (name: string): string => readFileSync(join(UI_DIST, name), 'utf8');

  it('is there: `npm run build` writes it', () => {
    expect(built, `${UI_DIST} is missing; run npm run build`).toBe(true);
  });

  it.runIf(built)('is one page, one script and one style sheet, and names nothing off the daemon', () => {
    expect(readdirSync(UI_DIST).sort()).toEqual(['index.html', 'overlay.css', 'overlay.js']);
    const html = read('index.html');
    expect(html).toContain('<script type="module" src="overlay.js">');
    expect(html).toContain('<link rel="stylesheet" href="overlay.css">');
    for (const name of ['index.html', 'overlay.css', 'overlay.js']) {
      // An absolute or protocol-relative URL to a named host, or a CSS @import / web font.
      expect(read(name), name).not.toMatch(/(?:https?:|wss?:)?\/\/[a-z0-9-]+\.[a-z]|@import|@font-face/i);
    }
  });

  it.runIf(built)('uses the Okabe–Ito colours and no others', () => {
    for (const name of ['overlay.css', 'overlay.js']) {
      const text = read(name);
      const hexes = [...text.matchAll(/#[0-9a-f]{6}\b/gi)].map((m) => m[0].toUpperCase());
      expect(hexes.filter((h) => !OKABE_ITO.includes(h)), name).toEqual([]);
      expect(text, name).not.toMatch(/\b(?:rgba?|hsla?|hwb|lab|lch|oklch)\(|#[0-9a-f]{3,4}\b(?![0-9a-f])/i);
    }
    expect(new Set([...read('overlay.js').matchAll(/#[0-9A-F]{6}\b/g)].map((m) => m[0]))).toEqual(new Set(OKABE_ITO));
  });
});
