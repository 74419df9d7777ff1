/**
 * Writing a file the user asked for (--html, --midi, --pairs), with an error
 * that names the option and the path instead of a stack trace.
 *
 * @example
 *   writeOutputFile('--html', 'out/review.html', html, { protect: ['sessions.db'] })
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { UsageError } from './user-error.js';

export interface OutputOptions {
  /** Files that must never be overwritten (the session log): what the user recorded is never lost. */
  protect?: readonly string[];
}

export function writeOutputFile(option: string, file: string, data: string | Uint8Array, options: OutputOptions = {}): void {
  const target = resolve(file);
  const guarded = options.protect?.find((p) => resolve(p) === target || resolve(`${p}-wal`) === target || resolve(`${p}-shm`) === target);
  if (guarded) throw new UsageError(`${option} ${file}: that is the session log ${guarded}; choose another file`);
  try {
    mkdirSync(dirname(target), { recursive: true });
    writeFileSync(target, data);
  } catch (e) {
    throw new UsageError(`${option} ${file}: cannot write (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
}
