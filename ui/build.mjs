/**
 * Builds the overlay into ui/dist/: index.html, overlay.js (one bundle) and
 * overlay.css — everything the daemon serves, nothing fetched from
 * elsewhere. Type-checking is `tsc -p ui/tsconfig.json`, run before this by
 * `npm run build`.
 *
 * @example
 *   node ui/build.mjs      // → ui/dist/index.html, ui/dist/overlay.js, ui/dist/overlay.css
 */
import { copyFile, mkdir, readdir, rm } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';

const here = dirname(fileURLToPath(import.meta.url));
const out = join(here, 'dist');

await rm(out, { recursive: true, force: true });
await mkdir(out, { recursive: true });
await build({
  entryPoints: { overlay: join(here, 'src', 'main.ts') },
  outdir: out,
  bundle: true,
  format: 'esm',
  // Current Chromium and Firefox; nothing older is promised.
  target: ['chrome120', 'firefox120'],
  minify: true,
  legalComments: 'none',
  logLevel: 'warning',
});
await copyFile(join(here, 'index.html'), join(out, 'index.html'));

const files = (await readdir(out)).sort();
const expected = ['index.html', 'overlay.css', 'overlay.js'];
if (files.join() !== expected.join()) throw new Error(`ui/build.mjs: expected ui/dist to hold ${expected.join(', ')}, it holds ${files.join(', ')}`);
