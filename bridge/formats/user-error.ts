/**
 * The error a user can fix: a bad option, a missing or damaged file, a port
 * already taken. Every bridge layer throws it; the CLI prints its message
 * without a stack and exits 2 (bridge/cli/usage.ts EXIT.usage). It lives in
 * the lowest bridge layer so that formats, corpus and daemon code can throw
 * it without importing the CLI.
 *
 * @example
 *   throw new UsageError(`--baseline b.json: field "window" must be a positive number, got "x"; rebuild it with \`baseline --json\``);
 */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}
