/**
 * The OSC address space. The codec is checked against the OSC 1.0
 * specification's own example (../shared/reference/check-values.md: the
 * message /oscillator/4/frequency with float 440.0 is 32 given bytes);
 * bytes of the daemon's messages are laid out by hand the same way.
 */
import osc from 'osc';
import { describe, expect, it } from 'vitest';
import { decodeMessage } from '../../../bridge/daemon/osc-messages.js';

/** OSC 1.0: a string is NUL-terminated and padded with NULs to a multiple of 4 bytes. */
const oscString = (s: string): number[] => {
  const bytes = [...Buffer.from(s, 'ascii'), 0];
  while (bytes.length % 4) bytes.push(0);
  return bytes;
};
const int32 = (n: number): number[] => [...Buffer.from(new Int32Array([n]).buffer)].reverse();
const float32 = (x: number): number[] => {
  const b = Buffer.alloc(4);
  b.writeFloatBE(x);
  return [...b];
};
const read = (bytes: number[]) => osc.readPacket(new Uint8Array(bytes), { metadata: true, unpackSingleArgs: false }) as { address: string; args: { type: string; value: unknown }[] };

describe('OSC 1.0 decoding', () => {
  it("reads the specification's example message", () => {
    const bytes = Buffer.from('2f6f7363696c6c61746f722f342f6672657175656e6379002c66000043dc0000', 'hex');
    expect(bytes.length).toBe(32);
    expect(osc.readPacket(bytes, { metadata: true, unpackSingleArgs: false })).toEqual({ address: '/oscillator/4/frequency', args: [{ type: 'f', value: 440 }] });
  });

  it('reads /ew/note laid out by hand: int32 pitch, int32 velocity, float32 duration, float32 beat, int32 channel', () => {
    const m = read([...oscString('/ew/note'), ...oscString(',iiffi'), ...int32(62), ...int32(100), ...float32(0.5), ...float32(17.25), ...int32(3)]);
    expect(decodeMessage(m.address, m.args)).toEqual({ kind: 'note', pitch: 62, velocity: 100, duration: 0.5, beat: 17.25, channel: 3 });
  });
});

const i = (value: number) => ({ type: 'i', value });
const f = (value: number) => ({ type: 'f', value });

describe('the address space', () => {
  it('takes a note now, on channel 1, when beat and channel are left out', () => {
    expect(decodeMessage('/ew/note', [i(60), i(90), f(1)])).toEqual({ kind: 'note', pitch: 60, velocity: 90, duration: 1, beat: null, channel: 1 });
  });

  it('accepts an int for a float and a whole float for an int', () => {
    expect(decodeMessage('/ew/note', [f(60), i(90), i(2), i(8)])).toEqual({ kind: 'note', pitch: 60, velocity: 90, duration: 2, beat: 8, channel: 1 });
    expect(decodeMessage('/ew/tempo', [i(90)])).toEqual({ kind: 'tempo', bpm: 90 });
    expect(decodeMessage('/ew/beat', [{ type: 'd', value: 4.5 }])).toEqual({ kind: 'beat', beat: 4.5 });
  });

  it('reads on/off pairs; an on with velocity 0 is an off, as in MIDI 1.0', () => {
    expect(decodeMessage('/ew/on', [i(64), i(80), i(2)])).toEqual({ kind: 'on', pitch: 64, velocity: 80, channel: 2 });
    expect(decodeMessage('/ew/on', [i(64), i(0)])).toEqual({ kind: 'off', pitch: 64, channel: 1 });
    expect(decodeMessage('/ew/off', [i(64)])).toEqual({ kind: 'off', pitch: 64, channel: 1 });
    expect(decodeMessage('/ew/reset', [])).toEqual({ kind: 'reset' });
  });

  it('reads the session\'s time signature; the lower figure a power of two as in SMF 1.0\'s FF 58', () => {
    expect(decodeMessage('/ew/meter', [i(6), i(8)])).toEqual({ kind: 'meter', numerator: 6, denominator: 8 });
    expect(decodeMessage('/ew/meter', [i(7), i(6)])).toMatchObject({ bad: { kind: 'meter' } });
  });

  it.each([
    ['/ew/nope', [], 'address', /unknown address "\/ew\/nope"; the addresses are \/ew\/note/],
    ['/ew/note', [i(60)], 'arguments', /\/ew\/note takes pitch velocity durationBeats \[beat\] \[channel\], got 1 argument$/],
    ['/ew/reset', [i(1)], 'arguments', /takes no arguments, got 1 argument/],
    ['/ew/note', [{ type: 's', value: 'C4' }, i(90), f(1)], 'type', /pitch must be a number \(OSC type i or f\), got type "s"/],
    ['/ew/note', [i(128), i(90), f(1)], 'pitch', /pitch 128 is outside 0–127/],
    ['/ew/note', [i(-1), i(90), f(1)], 'pitch', /pitch -1 is outside 0–127/],
    ['/ew/note', [f(60.5), i(90), f(1)], 'pitch', /pitch 60.5 is not a whole number/],
    ['/ew/note', [i(60), i(0), f(1)], 'velocity', /velocity 0 is outside 1–127/],
    ['/ew/note', [i(60), i(90), f(-1)], 'duration', /durationBeats -1 is not a duration/],
    ['/ew/note', [i(60), i(90), f(1), f(NaN)], 'beat', /beat NaN is not a beat from 0 to 500000/],
    ['/ew/note', [i(60), i(90), f(1), f(1e12)], 'beat', /beat 1000000000000 is not a beat/],
    ['/ew/note', [i(60), i(90), f(1), f(0), i(17)], 'channel', /channel 17 is outside 1–16/],
    ['/ew/tempo', [f(0)], 'tempo', /bpm 0 is not a tempo from 1 to 999 BPM/],
    ['/ew/tempo', [f(Infinity)], 'tempo', /bpm Infinity/],
    ['/ew/beat', [f(-4)], 'beat', /position -4 is not a beat/],
  ])('%s %j is bad input of kind %s', (address, args, kind, detail) => {
    const r = decodeMessage(address, args);
    expect(r).toMatchObject({ bad: { kind } });
    expect((r as { bad: { detail: string } }).bad.detail).toMatch(detail);
  });
});
