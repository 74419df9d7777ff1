/**
 * The beat position, against the MIDI 1.0 Detailed Specification's values
 * (../shared/reference/check-values.md): Timing Clock 24 per quarter note;
 * Song Position Pointer counts sixteenths (one "MIDI beat" = 6 clocks), so
 * SPP 8 is beat 2.0; Start plays from song position 0.
 */
import { describe, expect, it } from 'vitest';
import {
  CLOCKS_PER_BEAT, CLOCKS_PER_SPP_UNIT, beatAt, clockIntervalToBpm, internalClock, midiContinue, midiStart, midiStop, midiTick, setBeat, setTempo, songPosition, sppToBeat,
} from '../../core/clock.js';

/** `n` clocks `ms` apart from `t0`: the clock and the time of the last one. */
function ticks(c: ReturnType<typeof internalClock>, n: number, t0: number, ms: number) {
  let t = t0;
  for (let i = 0; i < n; i++) c = midiTick(c, (t = t0 + i * ms));
  return { c, t };
}

describe('MIDI 1.0 clock arithmetic', () => {
  it('counts 24 clocks to the quarter note and 6 to the SPP unit (MIDI 1.0)', () => {
    expect(CLOCKS_PER_BEAT).toBe(24);
    expect(CLOCKS_PER_SPP_UNIT).toBe(6);
  });

  it('reads Song Position Pointer in sixteenths: SPP 8 = beat 2.0 (MIDI 1.0)', () => {
    expect(sppToBeat(8)).toBe(2);
    expect(sppToBeat(0)).toBe(0);
    expect(sppToBeat(1)).toBe(0.25);
    expect(sppToBeat(0x3fff)).toBe(4095.75);
  });

  it('Start plays from position 0 at the next clock; 24 clocks later it is beat 1', () => {
    let c = setBeat(internalClock(120, 0), 37.5, 0);
    c = midiStart(c, 1000);
    expect(beatAt(c, 1000)).toBe(0);
    expect(beatAt(c, 5000)).toBe(0); // no clock yet: the song waits for it
    const { c: after, t } = ticks(c, 25, 1000, 20);
    expect(beatAt(after, t)).toBe(1);
  });

  it('SPP 8 then Continue: the first clock sounds beat 2.0, and 24 more make beat 3.0', () => {
    let c = midiStop(midiStart(internalClock(120, 0), 0), 0);
    c = songPosition(c, 8, 100);
    expect(beatAt(c, 100)).toBe(2);
    c = midiContinue(c, 200);
    const first = ticks(c, 1, 210, 20);
    expect(beatAt(first.c, first.t)).toBe(2);
    const more = ticks(c, 25, 210, 20);
    expect(beatAt(more.c, more.t)).toBe(3);
  });

  it('Stop holds the position of the last clock; Continue carries on from the next', () => {
    const { c: running, t } = ticks(midiStart(internalClock(120, 0), 0), 13, 0, 20); // clock 13 plays 12/24
    const stopped = midiStop(running, t + 5);
    expect(beatAt(stopped, t + 10_000)).toBe(0.5);
    expect(midiTick(stopped, t + 10_000)).toBe(stopped); // clocks while stopped move nothing
    const resumed = midiTick(midiContinue(stopped, t + 20_000), t + 20_010);
    expect(beatAt(resumed, t + 20_010)).toBeCloseTo(13 / 24, 12);
  });

  it('follows the clock rate: clocks 25 ms apart are 100 BPM, and the position moves on between them', () => {
    expect(clockIntervalToBpm(25)).toBe(100);
    const { c, t } = ticks(midiStart(internalClock(120, 0), 0), 49, 0, 25); // the preset said 120
    expect(c.bpm).toBeCloseTo(100, 1);
    expect(beatAt(c, t)).toBe(2);
    expect(beatAt(c, t + 12.5)).toBeCloseTo(2 + 0.5 / 24, 4);
    // Never past the next clock's position, however late it is.
    expect(beatAt(c, t + 10_000)).toBeCloseTo(2 + 1 / 24, 12);
  });

  it('without MIDI clock the daemon keeps its own time at the preset tempo; /ew/tempo and /ew/beat change it', () => {
    let c = internalClock(120, 0);
    expect(beatAt(c, 1500)).toBe(3);
    c = setTempo(c, 60, 2000); // 4 beats in, now one beat a second
    expect(beatAt(c, 3000)).toBe(5);
    c = setBeat(c, 16, 3000);
    expect(beatAt(c, 3500)).toBe(16.5);
  });

  it('once MIDI clock drives, OSC beat and tempo do not fight it', () => {
    const { c } = ticks(midiStart(internalClock(120, 0), 0), 3, 0, 20);
    expect(setBeat(c, 99, 100)).toBe(c);
    expect(beatAt(setTempo(c, 60, 100), 40)).toBe(beatAt(c, 40));
  });
});
