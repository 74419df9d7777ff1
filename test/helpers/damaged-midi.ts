/**
 * Damaged and hostile MIDI files for the reliability tests, laid out by hand
 * per SMF 1.0 through test/helpers/smf.mjs: each names what is wrong with
 * it, so a test can say which file was refused and why.
 *
 * @example
 *   const files = damagedFiles();
 *   files['four-gigabyte-chunk.mid']   // → bytes whose track declares 0xFFFFFFFF bytes
 *   manyNotes(500_000)                 // → one track of a million note events
 */
import { chunk, endOfTrack, noteOn, notesFile, smf, track } from './smf.mjs';
import { seededRandom } from '../../core/stats.js';
import { melody } from './daemon.js';

/** An MThd chunk announcing `tracks` tracks, whatever follows. */
export const header = (format: number, tracks: number, ppq: number): number[] => chunk('MThd', [0, format, tracks >> 8, tracks & 0xff, ppq >> 8, ppq & 0xff]);
export { chunk };

/**
 * A format 0 file of `n` notes one after another (2n note events), written
 * with running status and Note On velocity 0 as Note Off (MIDI 1.0).
 * `offPitch` lets the offs name another key, so no note is ever ended: the
 * worst case for the parser underneath, which then searches every off for each on.
 */
export function manyNotes(n: number, tracks = 1, offPitch?: number): Uint8Array {
  const events: [number, number[]][] = [];
  for (let k = 0; k < n; k++) {
    const pitch = 60 + (k % 12);
    events.push([0, noteOn(1, pitch, 90)], [60, noteOn(1, offPitch ?? pitch, 0)]);
  }
  const one = track([...events, [0, endOfTrack()]], { running: true });
  return smf({ format: tracks === 1 ? 0 : 1, ppq: 480, tracks: Array.from({ length: tracks }, () => one) });
}

/** A good corpus piece: an invented melody of 32 beats. */
export const goodFile = (seed: number): Uint8Array => notesFile(melody(seed).map((n) => ({ onset: n.onset, duration: n.duration, pitch: n.pitch })), { ppq: 480 });

/** Every kind of damage the issue names, and a few more, by file name. */
export function damagedFiles(): Record<string, Uint8Array> {
  const good = goodFile(101);
  const rand = seededRandom(8);
  const withLength = (bytes: Uint8Array, length: number): Uint8Array => {
    const b = Uint8Array.from(bytes);
    new DataView(b.buffer).setUint32(18, length); // the first track's length, after the 14-byte header and "MTrk"
    return b;
  };
  const withTracks = (bytes: Uint8Array, tracks: number): Uint8Array => {
    const b = Uint8Array.from(bytes);
    new DataView(b.buffer).setUint16(10, tracks);
    return b;
  };
  return {
    'empty.mid': new Uint8Array(0),
    'truncated.mid': good.subarray(0, Math.floor(good.length / 2)),
    'random-bytes.mid': Uint8Array.from({ length: 4096 }, () => Math.floor(rand() * 256)),
    'sixty-five-thousand-tracks.mid': withTracks(good, 65_535),
    'four-gigabyte-chunk.mid': withLength(good, 0xffff_ffff),
    'four-gigabyte-header.mid': Uint8Array.from([...chunk('MThd', []).slice(0, 4), 0xff, 0xff, 0xff, 0xff, 0, 0, 0, 1, 1, 0xe0]),
    'million-events.mid': manyNotes(500_000),
    // SMF 1.0 caps variable-length numbers at 4 bytes; this 5-byte one reads as a length of −7 to the parser underneath.
    'endless-loop.mid': Uint8Array.from([...header(0, 1, 480), ...chunk('MTrk', [0x00, 0xf0, 0x8f, 0xff, 0xff, 0xff, 0x79, 0x00, 0xff, 0x2f, 0x00])]),
    'no-notes.mid': smf({ format: 0, ppq: 480, tracks: [track([[0, endOfTrack()]])] }),
  };
}
