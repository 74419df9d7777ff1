/**
 * DEVELOPERS.md stays a guide: under 15 KB, and its layout table names every
 * source file (core/, contract/, bridge/, ui/), so a new module is placed
 * in the guide when it is made.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT } from './helpers/daemon.js';

const guide = readFileSync(join(ROOT, 'DEVELOPERS.md'), 'utf8');

function files(dir: string): string[] {
  return readdirSync(join(ROOT, dir), { withFileTypes: true }).flatMap((d) => {
    const path = `${dir}/${d.name}`;
    if (d.isDirectory()) return d.name === 'dist' || d.name === 'node_modules' ? [] : files(path);
    return /\.(ts|mjs|css|html|json)$/.test(d.name) ? [path] : [];
  });
}

describe('DEVELOPERS.md', () => {
  it('is at most 15 KB', () => {
    expect(Buffer.byteLength(guide)).toBeLessThanOrEqual(15 * 1024);
  });

  it('names every source file in its layout table', () => {
    const rows = new Set([...guide.matchAll(/^\| `([^`]+)` \|/gm)].map((m) => m[1]));
    const sources = ['core', 'contract', 'bridge', 'ui'].flatMap(files);
    expect(sources.length).toBeGreaterThan(80);
    expect(sources.filter((f) => !rows.has(f))).toEqual([]);
    expect([...rows].filter((f) => !sources.includes(f))).toEqual([]);
  });
});
