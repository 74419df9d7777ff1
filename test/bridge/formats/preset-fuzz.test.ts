/**
 * The preset loader on hostile input (fast-check, 10,000 inputs a
 * property): random JSON values, presets with one field set to a random
 * value or an extra field, random file contents, and random flag values.
 * Each either gives a preset every field of which is within its documented
 * range (bridge/formats/presets.ts), or a UsageError that names the preset and the
 * field or flag — never another exception. JSON is only parsed, never run:
 * a "__proto__" key changes no object's prototype.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { FLAG_OF, MAX_GRID, MAX_WINDOW_BEATS, type Preset, loadPreset, parsePreset, withOverrides } from '../../../bridge/formats/presets.js';
import { MAX_BPM, MIN_BPM } from '../../../core/clock.js';
import { UsageError } from '../../../bridge/formats/user-error.js';
import { tempDir } from '../../helpers/daemon.js';

const RUNS = 10_000;
const jam = loadPreset('jam');
const FIELDS = Object.keys(jam);

/** The documented range of every field (presets.ts ALLOWED), checked afresh. */
function inRange(p: Preset): void {
  expect(p.name).toMatch(/^[A-Za-z0-9_-]+$/);
  expect(p.description.length).toBeGreaterThan(0);
  expect(['midi', 'osc', 'both']).toContain(p.input);
  expect(p.window > 0 && p.window <= MAX_WINDOW_BEATS).toBe(true);
  expect(p.bpm >= MIN_BPM && p.bpm <= MAX_BPM).toBe(true);
  expect(p.threshold === 'auto' || (p.threshold >= 0 && p.threshold <= 1)).toBe(true);
  expect(Number.isInteger(p.minNotes) && p.minNotes >= 1).toBe(true);
  expect(Number.isInteger(p.consecutive) && p.consecutive >= 1 && p.consecutive <= 100).toBe(true);
  expect(p.hysteresis >= 0 && p.hysteresis <= 1).toBe(true);
  expect(typeof p.warn).toBe('boolean');
  expect(Number.isInteger(p.grid) && p.grid >= 0 && p.grid <= MAX_GRID && (p.grid === 0 || 3840 % p.grid === 0)).toBe(true);
  expect(p.tolerance >= 0 && p.tolerance < 1).toBe(true);
  expect(p.minDistinctiveness >= 0 && p.minDistinctiveness <= 1).toBe(true);
}

interface Tally {
  accepted: number;
  refused: number;
}

/** Runs `f`; a preset must be in range, an error a UsageError matching `names`. */
const outcome = (tally: Tally, names: RegExp, f: () => Preset): void => {
  let p: Preset;
  try {
    p = f();
  } catch (e) {
    if (!(e instanceof UsageError)) throw e;
    expect(e.message).toMatch(names);
    tally.refused++;
    return;
  }
  inRange(p);
  tally.accepted++;
};

const field = fc.oneof(fc.constantFrom(...FIELDS), fc.constantFrom('__proto__', 'constructor', 'toString', ''), fc.string({ maxLength: 12 }));

describe('the preset loader on hostile input', () => {
  it(`random JSON values (${RUNS})`, () => {
    const tally = { accepted: 0, refused: 0 };
    fc.assert(fc.property(fc.jsonValue(), (v) => outcome(tally, /^preset fuzz\.json: /, () => parsePreset(v, 'fuzz.json'))), { numRuns: RUNS });
    console.log(`preset fuzz json: ${RUNS} values, ${tally.accepted} accepted, ${tally.refused} refused`);
    expect(tally.refused).toBe(RUNS); // a random value is never a whole preset
  });

  it(`a good preset with one field set to anything, or one field more (${RUNS})`, () => {
    const tally = { accepted: 0, refused: 0 };
    const near = fc.tuple(field, fc.oneof(fc.jsonValue(), fc.constantFrom(0, 1, -1, 0.5, 16, 64, 65, 3840, 7, 'auto', 'osc', true, null))).map(([k, v]) => JSON.parse(JSON.stringify({ ...jam, [k]: v })) as unknown);
    fc.assert(fc.property(near, (v) => outcome(tally, /^preset fuzz\.json: field ".*": (got |no such field)/s, () => parsePreset(v, 'fuzz.json'))), { numRuns: RUNS });
    console.log(`preset fuzz near: ${RUNS} presets, ${tally.accepted} accepted, ${tally.refused} refused`);
    expect(tally.accepted).toBeGreaterThan(0);
    expect(tally.refused).toBeGreaterThan(0);
  });

  it(`random file contents, through the file loader (${RUNS})`, () => {
    const tally = { accepted: 0, refused: 0 };
    const file = join(tempDir('preset-fuzz'), 'stage.json');
    const text = fc.oneof(fc.json(), fc.string({ maxLength: 200 }), fc.tuple(field, fc.oneof(fc.jsonValue(), fc.constantFrom(0.5, 8, 'both', false))).map(([k, v]) => JSON.stringify({ ...jam, [k]: v })), fc.constant('{"__proto__": {"polluted": true}, "name": "x"}'));
    fc.assert(
      fc.property(text, (t) => {
        writeFileSync(file, t);
        outcome(tally, new RegExp(`^preset ${file.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: `), () => loadPreset(file));
      }),
      { numRuns: RUNS },
    );
    console.log(`preset fuzz files: ${RUNS} files, ${tally.accepted} accepted, ${tally.refused} refused`);
    expect(tally.accepted).toBeGreaterThan(0);
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
    expect(Object.prototype).not.toHaveProperty('polluted');
  });

  it(`random flag values over a good preset (${RUNS})`, () => {
    const tally = { accepted: 0, refused: 0 };
    const flags = Object.keys(FLAG_OF) as (keyof typeof FLAG_OF)[];
    const value = fc.oneof(fc.string({ maxLength: 12 }), fc.constantFrom('0', '1', '16', '64', '65', '0.5', '1e3', 'auto', 'osc', 'NaN', 'Infinity', '-0', ' ', '0x10'), fc.double().map(String), fc.boolean());
    const overrides = fc.dictionary(fc.constantFrom(...flags), value, { maxKeys: 4 });
    fc.assert(fc.property(overrides, (o) => outcome(tally, /^(--[a-z-]+( \/ --[a-z-]+)? |preset jam: field ")/, () => withOverrides(jam, o))), { numRuns: RUNS });
    console.log(`preset fuzz flags: ${RUNS} sets of flags, ${tally.accepted} accepted, ${tally.refused} refused`);
    expect(tally.accepted).toBeGreaterThan(0);
    expect(tally.refused).toBeGreaterThan(0);
  });
});
