/**
 * Presets: the three shipped ones, a bad preset's error (naming the field
 * and the values it allows), and flags overriding preset values — in
 * process and as a user runs `earwitness listen`.
 */
import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { BUILT_IN_PRESETS, EARLY_FALLBACK, loadPreset, resolveThreshold, withOverrides } from '../../../bridge/formats/presets.js';
import type { HelloEvent } from '../../../contract/events.js';
import { CLI, ROOT, listen, spawnDaemon, tempDir, writeCorpus } from '../../helpers/daemon.js';

const presetFile = (fields: Record<string, unknown>): string => {
  const file = join(tempDir('preset'), 'stage.json');
  writeFileSync(file, JSON.stringify({ ...loadPreset('jam'), name: 'stage', ...fields }));
  return file;
};

describe('the shipped presets', () => {
  it('all load, and each is what its name promises', () => {
    const [jam, livecode, record] = BUILT_IN_PRESETS.map(loadPreset);
    expect(jam).toMatchObject({ name: 'jam', input: 'midi', window: 16, warn: true });
    expect(livecode).toMatchObject({ name: 'livecode', input: 'osc', window: 8, warn: true });
    expect(livecode.window).toBeLessThan(jam.window);
    // Both warn early: a recent stretch of at most four beats may warn on its own, with a threshold for each length.
    for (const p of [jam, livecode]) {
      expect(p.earlyBeats[0]).toBeLessThanOrEqual(4);
      expect(p.earlyThreshold).toHaveLength(p.earlyBeats.length);
    }
    expect(record).toMatchObject({ name: 'record', warn: false });
  });

  it('early thresholds: one per length of earlyBeats, one number for all, or "auto" (a fallback where no baseline is stored)', () => {
    const jam = loadPreset('jam');
    expect(resolveThreshold(jam, tempDir('no-index')).earlyThresholds).toEqual(jam.earlyThreshold);
    expect(resolveThreshold({ ...jam, earlyThreshold: 0.9 }, tempDir('no-index')).earlyThresholds).toEqual(jam.earlyBeats.map(() => 0.9));
    expect(resolveThreshold({ ...jam, earlyThreshold: 'auto' }, tempDir('no-index'))).toMatchObject({ earlyThresholds: jam.earlyBeats.map(() => EARLY_FALLBACK), earlyUncalibrated: jam.earlyBeats });
    expect(() => resolveThreshold({ ...jam, earlyThreshold: [0.9] }, tempDir('no-index'))).toThrow(/field "earlyThreshold": got 1 thresholds for the 5 lengths of earlyBeats/);
  });
});

describe('a bad preset', () => {
  it.each([
    [{ threshold: 1.5 }, /field "threshold": got 1\.5; allowed: a number from 0 to 1\b/],
    [{ input: 'usb' }, /field "input": got "usb"; allowed: one of "midi", "osc", "both"$/],
    [{ window: 0 }, /field "window": got 0; allowed: a number of beats above 0, at most 64$/],
    [{ minNotes: 2.5 }, /field "minNotes": got 2\.5; allowed: a whole number of at least 1$/],
    [{ warn: 'yes' }, /field "warn": got "yes"; allowed: true or false$/],
    [{ grid: 7 }, /field "grid": got 7; allowed: a note value such as "1\/16", "1\/16T" or "1\/32", or a whole number of divisions per beat that divides 3840/],
    [{ grid: '1/12' }, /field "grid": got "1\/12"; allowed: a note value/],
    [{ meter: '3/5' }, /field "meter": got "3\/5"; allowed: a time signature such as "4\/4"/],
    [{ earlyLeftOut: 1 }, /field "earlyLeftOut": got 1; allowed: a share from 0 up to, not including, 1: of a corpus passage's notes/],
    [{ bpm: undefined }, /field "bpm": got nothing; allowed: a tempo from 1 to 999/],
    [{ thresold: 0.5 }, /field "thresold": no such field; the fields are name, description, input, window, bpm, threshold/],
  ])('%j is refused, naming the field and the allowed values', (fields, message) => {
    const file = presetFile(fields);
    expect(() => loadPreset(file)).toThrow(`preset ${file}: `);
    expect(() => loadPreset(file)).toThrow(message);
  });

  it('names what is wrong with an unknown name, a missing file, or a file that is not JSON', () => {
    expect(() => loadPreset('gig')).toThrow('--preset gig: no such preset; the presets are jam, livecode, record, or give the path of a .json file');
    expect(() => loadPreset('/nowhere/stage.json')).toThrow('--preset /nowhere/stage.json: cannot be read (ENOENT)');
    const file = join(tempDir('preset'), 'broken.json');
    writeFileSync(file, '{ "name": ');
    expect(() => loadPreset(file)).toThrow(new RegExp(`^preset ${file}: not JSON`));
  });

  it('stops `earwitness listen` with exit code 2 and the message, before anything starts', () => {
    const file = presetFile({ hysteresis: -1 });
    const r = spawnSync('node', [CLI, 'listen', '--corpus', 'presets/demo/corpus', '--preset', file], { cwd: ROOT, encoding: 'utf8' });
    expect(r.status).toBe(2);
    expect(r.stderr).toBe(`earwitness: preset ${file}: field "hysteresis": got -1; allowed: a number from 0 to 1\n`);
    expect(r.stdout).toBe('');
  });
});

describe('flags override preset values', () => {
  it('in process: the flag wins, and a bad flag value names the flag', () => {
    const jam = loadPreset('jam');
    expect(withOverrides(jam, { threshold: '0.8', minNotes: '4', warn: false, input: 'osc' })).toEqual({ ...jam, threshold: 0.8, minNotes: 4, warn: false, input: 'osc' });
    expect(withOverrides(jam, {})).toEqual(jam);
    expect(() => withOverrides(jam, { threshold: '2' })).toThrow('--threshold 2: allowed: a number from 0 to 1');
    expect(() => withOverrides(jam, { consecutive: 'three' })).toThrow('--consecutive three: allowed: a whole number from 1 to 100');
    expect(() => withOverrides(jam, { input: 'usb' })).toThrow('--input usb: allowed: one of "midi", "osc", "both"');
    expect(withOverrides(jam, { earlyLeftOut: '0' }).earlyLeftOut).toBe(0);
    expect(() => withOverrides(jam, { earlyLeftOut: 'a tenth' })).toThrow('--early-left-out a tenth: allowed: a share from 0 up to, not including, 1');
  });

  it('--grid takes a note value as a sequencer writes it (1/16 = 4 a beat, 1/16T = 6), or a number; --meter a time signature', () => {
    const jam = loadPreset('jam');
    expect(withOverrides(jam, { grid: '1/16' }).grid).toBe(4);
    expect(withOverrides(jam, { grid: '1/16T' }).grid).toBe(6);
    expect(withOverrides(jam, { grid: '12' }).grid).toBe(12);
    expect(jam.meter).toBe('4/4');
    expect(withOverrides(jam, { meter: '6/8' }).meter).toBe('6/8');
    expect(() => withOverrides(jam, { grid: '1/12' })).toThrow('--grid 1/12: allowed: a note value');
  });

  it('as a user runs it: the hello the overlay gets carries the overridden values', async () => {
    const d = await spawnDaemon(['--corpus', writeCorpus().dir, '--preset', 'livecode', '--window', '4', '--threshold', '0.9', '--early-left-out', '0.05', '--no-warn']);
    try {
      const events = await listen(d.http);
      const hello = (await events.next((e) => e.type === 'hello')) as HelloEvent;
      expect(hello.preset).toMatchObject({ name: 'livecode', window: 4, threshold: 0.9, warn: false, minNotes: loadPreset('livecode').minNotes });
      expect(hello.preset.early).toMatchObject({ lengths: loadPreset('livecode').earlyBeats, leftOut: 0.05 });
      expect(d.stdout()).toMatch(/preset: livecode — .*\(window 4 beats, threshold 0\.9, .*no warnings\)/);
      events.close();
    } finally {
      await d.stop();
    }
  });
});
