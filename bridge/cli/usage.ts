import { UsageError } from '../formats/user-error.js';

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

export function parseNumber(name: string, value: string, check: (n: number) => boolean = Number.isFinite, what = 'a number'): number {
  const n = Number(value);
  if (value.trim() === '' || !check(n)) throw new UsageError(`${name} must be ${what}, got "${value}"`);
  return n;
}

export const positive = (name: string) => (v: string) => parseNumber(name, v, (n) => Number.isFinite(n) && n > 0, 'a positive number');
export const wholeNumber = (name: string) => (v: string) => parseNumber(name, v, (n) => Number.isInteger(n) && n >= 0, 'a whole number');
