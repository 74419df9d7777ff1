/**
 * The error a user can fix: a bad option, a missing or damaged file, a port
 * already taken. Every bridge layer throws it; the CLI prints its message
 * without a stack and exits 2 (bridge/cli/usage.ts EXIT.usage). It lives in
 * the lowest bridge layer so that formats, corpus and daemon code can throw
 * it without importing the CLI.
 *
 * @example
 *   throw new UsageError(`--baseline b.json: field "window" must be a positive number, got "x"; rebuild it with \`baseline --json\``);
 *   positive('--window')('x')   // throws UsageError: --window must be a positive number, got "x"
 *
 * The number rules live here too, so an option and a daemon's query
 * parameter of the same meaning are told the same way.
 */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** `value` as a number passing `check`; else a UsageError naming `name`, what was expected and what was given. */
export function parseNumber(name: string, value: string, check: (n: number) => boolean = Number.isFinite, what = 'a number'): number {
  const n = Number(value);
  if (value.trim() === '' || !check(n)) throw new UsageError(`${name} must be ${what}, got "${value}"`);
  return n;
}

export const positive = (name: string) => (v: string) => parseNumber(name, v, (n) => Number.isFinite(n) && n > 0, 'a positive number');
export const wholeNumber = (name: string) => (v: string) => parseNumber(name, v, (n) => Number.isInteger(n) && n >= 0, 'a whole number');
