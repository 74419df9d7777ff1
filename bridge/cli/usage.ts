/** Exit codes, as documented in `--help` and the README. */
export const EXIT = {
  ok: 0,
  /** `check`: the queries fall below the originality bar. */
  belowBar: 1,
  /** Bad command line or unusable input. */
  usage: 2,
} as const;


/** Thrown by a command once it has printed its result, when that result has an exit code of its own (check: below the bar). */
export class Outcome extends Error {
  constructor(readonly code: number, message: string) {
    super(message);
    this.name = 'Outcome';
  }
}
