/**
 * Finding an outside tool a test checks against, so the test can skip with a
 * message naming the tool where it is not installed (CI installs it).
 *
 * @example
 *   const midicsv = tool('midicsv', 'midicsv');
 *   describe.skipIf(!midicsv.path)(`against ${midicsv.label}`, () => { ... });
 */
import { accessSync, constants } from 'node:fs';
import { delimiter, join } from 'node:path';

/** The tool's path on PATH, or null: a PATH search, the same lookup a shell does. */
export function which(name: string): string | null {
  for (const dir of (process.env.PATH ?? '').split(delimiter)) {
    if (!dir) continue;
    const candidate = join(dir, name);
    try {
      accessSync(candidate, constants.X_OK);
      return candidate;
    } catch {
      // Not in this directory.
    }
  }
  return null;
}

export interface Tool {
  path: string | null;
  /** For test titles: says what is skipped and why when the tool is absent. */
  label: string;
}

/** Looks a tool up once and says, on stderr, what is skipped when it is absent. */
export function tool(name: string, debianPackage: string): Tool {
  const path = which(name);
  const label = path ? name : `${name} (skipped: ${name} is not installed; apt-get install ${debianPackage})`;
  if (!path) process.stderr.write(`skipping the checks against ${name}: it is not installed (Debian package ${debianPackage})\n`);
  return { path, label };
}
