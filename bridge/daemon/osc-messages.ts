/**
 * The daemon's OSC address space, checked argument by argument.
 *
 *   /ew/note  i:pitch i:velocity f:durationBeats [f:beat] [i:channel]
 *   /ew/on    i:pitch i:velocity [i:channel]      (velocity 0 = off, as in MIDI)
 *   /ew/off   i:pitch [i:channel]
 *   /ew/tempo f:bpm
 *   /ew/beat  f:position
 *   /ew/reset
 *
 * Numbers may come as OSC 1.0 `i` (int32) or `f` (float32), or as the
 * common `d` (float64), whichever a client sends: a float where an int is
 * asked for is accepted when it is whole (60.0), an int where a float is
 * asked for always. Anything else is a BadInput naming what was wrong.
 *
 * @example
 *   decodeMessage('/ew/note', [{ type: 'i', value: 60 }, { type: 'i', value: 100 }, { type: 'f', value: 0.5 }])
 *   // → { kind: 'note', pitch: 60, velocity: 100, duration: 0.5, beat: null, channel: 1 }
 *   decodeMessage('/ew/note', [{ type: 'i', value: 200 }, ...])
 *   // → { bad: { kind: 'pitch', detail: '/ew/note: pitch 200 is outside 0–127' } }
 */
import { MAX_BPM, MIN_BPM, isTempo } from '../../core/clock.js';
import { type BadInput, type InputCommand, MAX_BEAT, MAX_DURATION, isBeat, isChannel, isPitch } from './input.js';

export interface OscArg {
  type: string;
  value: unknown;
}

interface Param {
  name: string;
  whole: boolean;
  check: (n: number) => boolean;
  /** The bad-input kind when the check fails, and what is allowed. */
  bad: string;
  allowed: string;
  optional?: boolean;
}

const pitch: Param = { name: 'pitch', whole: true, check: isPitch, bad: 'pitch', allowed: 'outside 0–127' };
const channel: Param = { name: 'channel', whole: true, check: isChannel, bad: 'channel', allowed: 'outside 1–16', optional: true };
const velocity = (min: number): Param => ({ name: 'velocity', whole: true, check: (n) => n >= min && n <= 127, bad: 'velocity', allowed: `outside ${min}–127` });
const beat = (name: string, optional: boolean): Param => ({ name, whole: false, check: isBeat, bad: 'beat', allowed: `not a beat from 0 to ${MAX_BEAT}`, optional });

const ADDRESSES: Record<string, { params: Param[]; build: (v: (number | undefined)[]) => InputCommand }> = {
  '/ew/note': {
    params: [
      pitch,
      velocity(1),
      { name: 'durationBeats', whole: false, check: (n) => Number.isFinite(n) && n >= 0 && n <= MAX_DURATION, bad: 'duration', allowed: `not a duration from 0 to ${MAX_DURATION} beats` },
      beat('beat', true),
      channel,
    ],
    build: ([p, v, d, b, c]) => ({ kind: 'note', pitch: p!, velocity: v!, duration: d!, beat: b ?? null, channel: c ?? 1 }),
  },
  '/ew/on': {
    params: [pitch, velocity(0), channel],
    build: ([p, v, c]) => (v === 0 ? { kind: 'off', pitch: p!, channel: c ?? 1 } : { kind: 'on', pitch: p!, velocity: v!, channel: c ?? 1 }),
  },
  '/ew/off': { params: [pitch, channel], build: ([p, c]) => ({ kind: 'off', pitch: p!, channel: c ?? 1 }) },
  '/ew/tempo': { params: [{ name: 'bpm', whole: false, check: isTempo, bad: 'tempo', allowed: `not a tempo from ${MIN_BPM} to ${MAX_BPM} BPM` }], build: ([bpm]) => ({ kind: 'tempo', bpm: bpm! }) },
  '/ew/beat': { params: [beat('position', false)], build: ([b]) => ({ kind: 'beat', beat: b! }) },
  '/ew/reset': { params: [], build: () => ({ kind: 'reset' }) },
  '/ew/meter': {
    params: [
      { name: 'numerator', whole: true, check: (n) => n >= 1 && n <= 64, bad: 'meter', allowed: 'not a count of beats from 1 to 64' },
      { name: 'denominator', whole: true, check: (n) => n >= 1 && n <= 64 && (n & (n - 1)) === 0, bad: 'meter', allowed: 'not a note value 1, 2, 4, 8, 16, 32 or 64' },
    ],
    build: ([n, d]) => ({ kind: 'meter', numerator: n!, denominator: d! }),
  },
};

export const OSC_ADDRESSES = Object.keys(ADDRESSES);

const NUMERIC = new Set(['i', 'f', 'd']);

const signature = (params: readonly Param[]): string => params.map((p) => (p.optional ? `[${p.name}]` : p.name)).join(' ') || 'no arguments';

export type Decoded = InputCommand | { bad: BadInput };

export function decodeMessage(address: string, args: readonly OscArg[]): Decoded {
  const bad = (kind: string, detail: string): Decoded => ({ bad: { kind, detail } });
  const spec = ADDRESSES[address];
  if (!spec) return bad('address', `unknown address ${JSON.stringify(address.slice(0, 64))}; the addresses are ${OSC_ADDRESSES.join(', ')}`);
  const required = spec.params.filter((p) => !p.optional).length;
  if (args.length < required || args.length > spec.params.length) {
    return bad('arguments', `${address} takes ${signature(spec.params)}, got ${args.length} argument${args.length === 1 ? '' : 's'}`);
  }
  const values: (number | undefined)[] = [];
  for (const [i, arg] of args.entries()) {
    const p = spec.params[i];
    if (!NUMERIC.has(arg.type) || typeof arg.value !== 'number') {
      return bad('type', `${address}: ${p.name} must be a number (OSC type i or f), got type ${JSON.stringify(arg.type)}`);
    }
    const n = arg.value;
    if (p.whole && !Number.isInteger(n)) return bad(p.bad, `${address}: ${p.name} ${n} is not a whole number`);
    if (!p.check(n)) return bad(p.bad, `${address}: ${p.name} ${n} is ${p.allowed}`);
    values.push(n);
  }
  return spec.build(values);
}

