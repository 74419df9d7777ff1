/**
 * Time signatures read from Standard MIDI Files, and every note's bar and
 * beat, checked against sources the project did not write:
 *
 * - @tonejs/midi's `Header.ticksToMeasures` (a general-purpose MIDI
 *   library): a tick's position in measures counted from 0, from the same
 *   file's time signatures;
 * - Debian's `midicsv`: its Time_signature records (SMF 1.0 meta event
 *   FF 58 04 nn dd cc bb, nn/2^dd) give where each signature takes effect,
 *   and the positions of the notes are worked by hand below.
 *
 * The files are written byte by byte here (test/helpers/smf.mjs), with
 * invented notes: 3/4, 6/8, 4/4 with a one-beat pickup, and a metre change.
 */
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import tonejs from '@tonejs/midi';
import { describe, expect, it } from 'vitest';
import { barBeat, barQuarters, beatQuarters, hasPickup } from '../../../core/bars.js';
import { parseMidi } from '../../../bridge/formats/midi-file.js';
import { tempDir } from '../../helpers/daemon.js';
import { tool } from '../../helpers/which.js';
import { deltas, endOfTrack, noteEvents, smf, timeSignature, track } from '../../helpers/smf.mjs';

const PPQ = 96;

interface Case {
  name: string;
  /** [beat, numerator, denominator]. */
  signatures: [number, number, number][];
  /** Onsets in quarter-note beats, and their bar:beat worked by hand. */
  notes: { onset: number; bar: number; beatInBar: number }[];
}

const CASES: Case[] = [
  {
    name: 'waltz in 3/4',
    signatures: [[0, 3, 4]],
    notes: [
      { onset: 0, bar: 1, beatInBar: 1 },
      { onset: 2, bar: 1, beatInBar: 3 },
      { onset: 3, bar: 2, beatInBar: 1 },
      { onset: 7.5, bar: 3, beatInBar: 2.5 },
    ],
  },
  {
    // Two dotted-quarter beats a bar: 1.5 quarter notes a beat.
    name: 'jig in 6/8',
    signatures: [[0, 6, 8]],
    notes: [
      { onset: 0, bar: 1, beatInBar: 1 },
      { onset: 1.5, bar: 1, beatInBar: 2 },
      { onset: 4.5, bar: 2, beatInBar: 2 },
      { onset: 33, bar: 12, beatInBar: 1 },
      { onset: 34.5, bar: 12, beatInBar: 2 },
    ],
  },
  {
    // A one-beat pickup written as a bar of 1/4, then 4/4 (how notation programs export an anacrusis).
    name: 'reel in 4/4 with a pickup',
    signatures: [[0, 1, 4], [1, 4, 4]],
    notes: [
      { onset: 0, bar: 0, beatInBar: 1 },
      { onset: 1, bar: 1, beatInBar: 1 },
      { onset: 4, bar: 1, beatInBar: 4 },
      { onset: 5, bar: 2, beatInBar: 1 },
      { onset: 10, bar: 3, beatInBar: 2 },
    ],
  },
  {
    // Two bars of 4/4 (8 beats), two of 3/4 (6 beats), then 6/8.
    name: 'tune changing metre',
    signatures: [[0, 4, 4], [8, 3, 4], [14, 6, 8]],
    notes: [
      { onset: 7, bar: 2, beatInBar: 4 },
      { onset: 8, bar: 3, beatInBar: 1 },
      { onset: 12, bar: 4, beatInBar: 2 },
      { onset: 14, bar: 5, beatInBar: 1 },
      { onset: 18.5, bar: 6, beatInBar: 2 },
    ],
  },
];

function fileOf(c: Case): Uint8Array {
  const events = [
    ...c.signatures.map(([beat, n, d]) => [beat * PPQ, timeSignature(n, d)]),
    ...noteEvents(c.notes.map((n, i) => ({ onset: n.onset, duration: 0.5, pitch: 60 + i * 2 })), { ppq: PPQ }),
  ];
  return smf({ format: 0, ppq: PPQ, tracks: [track([...deltas(events), [0, endOfTrack()]])] });
}

describe('bars and beats of invented tunes, against @tonejs/midi Header.ticksToMeasures', () => {
  for (const c of CASES) {
    it(`${c.name}: every note's bar and beat agrees with the measures the library counts`, () => {
      const bytes = fileOf(c);
      const piece = parseMidi(bytes, `${c.name}.mid`);
      const header = new tonejs.Midi(bytes).header;
      const pickup = hasPickup(piece.meter);
      for (const n of c.notes) {
        const measures = header.ticksToMeasures(n.onset * PPQ);
        const whole = Math.floor(measures + 1e-9);
        // The library counts measures from 0; musicians count bars from 1, a pickup bar as 0.
        const sig = header.timeSignatures.filter((t) => t.ticks <= n.onset * PPQ).pop()!.timeSignature;
        const s = { numerator: sig[0], denominator: sig[1] };
        const expected = { bar: whole + (pickup ? 0 : 1), beatInBar: 1 + ((measures - whole) * barQuarters(s)) / beatQuarters(s) };
        const got = barBeat(piece.meter, piece.notes.find((x) => x.onset === n.onset)!.onset)!;
        expect(got.bar).toBe(expected.bar);
        expect(got.beatInBar).toBeCloseTo(expected.beatInBar, 6);
      }
    });
  }
});

const midicsv = tool('midicsv', 'midicsv');

describe.skipIf(!midicsv.path)(`time signatures against Debian's ${midicsv.label}, positions worked by hand`, () => {
  const dir = tempDir('metre');
  for (const c of CASES) {
    it(`${c.name}: the signatures midicsv lists, and each note at its hand-worked bar and beat`, () => {
      const file = join(dir, `${c.name.replace(/\W+/g, '-')}.mid`);
      writeFileSync(file, fileOf(c));
      const csv = execFileSync(midicsv.path!, [file], { encoding: 'utf8' });
      // midicsv(1): "track, time, Time_signature, num, denom (a power of 2), click, notesPerQuarter".
      const listed = csv.split('\n').map((l) => l.split(',').map((f) => f.trim())).filter((f) => f[2] === 'Time_signature')
        .map((f) => ({ beat: Number(f[1]) / PPQ, numerator: Number(f[3]), denominator: 2 ** Number(f[4]) }));
      const piece = parseMidi(new Uint8Array(readFileSync(file)), file);
      expect(piece.meter).toEqual(listed);
      for (const n of c.notes) expect(barBeat(piece.meter, n.onset)).toEqual({ bar: n.bar, beatInBar: n.beatInBar });
    });
  }
});
