/**
 * The installed package's folder, found from this module whether it runs
 * from the sources (vitest) or from dist/ (the CLI): the nearest folder
 * upwards holding earwitness's package.json. Presets, the overlay's files
 * and the version are read from there.
 *
 * @example
 *   join(packageRoot(), 'presets', 'jam.json')
 */
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

let found: string | null = null;

export function packageRoot(): string {
  if (found) return found;
  for (let dir = dirname(fileURLToPath(import.meta.url)); ; dir = dirname(dir)) {
    const manifest = join(dir, 'package.json');
    if (existsSync(manifest) && (JSON.parse(readFileSync(manifest, 'utf8')) as { name?: string }).name === 'earwitness') return (found = dir);
    if (dirname(dir) === dir) throw new Error(`cannot find earwitness's package.json above ${fileURLToPath(import.meta.url)}`);
  }
}

/** The package's version, as the hello event and --version report it. */
export const packageVersion = (): string => (JSON.parse(readFileSync(join(packageRoot(), 'package.json'), 'utf8')) as { version: string }).version;
