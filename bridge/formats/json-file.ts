/**
 * Reading a JSON file the user named with an option, with errors that name
 * the option, the file and what went wrong instead of a stack trace.
 *
 * @example
 *   readJsonFile('--baseline', 'baseline.json')   // → the parsed value, not yet checked
 */
import { readFileSync } from 'node:fs';
import { UsageError } from './user-error.js';

/** `hint` follows the message when the file is not JSON: how to make a good one. */
export function readJsonFile(option: string, file: string, hint = ''): unknown {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new UsageError(`${option} ${file}: cannot be read (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new UsageError(`${option} ${file}: not JSON (${(e as Error).message})${hint ? `; ${hint}` : ''}`);
  }
}
