#!/usr/bin/env node
/**
 * Composes the bundled demo corpus and demo queries for earwitness.
 *
 *   node presets/demo/compose.mjs        (run from the repository root)
 *
 * Writes, next to this script:
 *   tunes.json              every corpus tune, note by note (the source of truth)
 *   corpus/<kebab-title>.mid one Standard MIDI File per tune
 *   queries/quote.mid       new material around a transposed, time-shifted quotation
 *   queries/fresh.mid       entirely new material
 *   queries/variation.mid   a loose variation keeping about 30% of a phrase
 *   queries/cadence.mid     new material ending on a stock scale run and cadence
 *
 * All of the music here is original to this project (see README.md).
 * The output is deterministic: the same bytes on every run.
 *
 * Notation used below: tokens separated by spaces, `|` is a bar line.
 *   d5        a note (letter, optional # or b, octave; c4 = MIDI 60)
 *   f#4:.5    a note with a duration in beats (quarter notes)
 *   d3+a3:2   a chord (notes sounding together)
 *   r:1       a rest
 * A duration carries over to the following tokens until a new one is given.
 * Every bar is checked against the time signature.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import pkg from '@tonejs/midi';
import midiFile from 'midi-file';

const { Midi } = pkg;
const { parseMidi, writeMidi } = midiFile;

const HERE = dirname(fileURLToPath(import.meta.url));
const PPQ = 480;

// ---------------------------------------------------------------------------
// Notation

const LETTER_PC = { c: 0, d: 2, e: 4, f: 5, g: 7, a: 9, b: 11 };

function pitchOf(name) {
  const m = /^([a-g])(#|b)?(-?\d)$/.exec(name);
  if (!m) throw new Error(`bad pitch "${name}"`);
  const alter = m[2] === '#' ? 1 : m[2] === 'b' ? -1 : 0;
  return 12 * (Number(m[3]) + 1) + LETTER_PC[m[1]] + alter;
}

function ticksOf(beats) {
  const t = Math.round(Number(beats) * PPQ);
  if (!Number.isFinite(t) || t <= 0 || Math.abs(t - Number(beats) * PPQ) > 1e-6) {
    throw new Error(`bad duration "${beats}"`);
  }
  return t;
}

/** Beats per bar (quarter notes) of a time signature. */
function barBeats([num, den]) {
  return (num * 4) / den;
}

/**
 * Parses a voice. Returns notes in ticks, relative to the voice's start, and
 * the voice's length in ticks. With `bar` (beats), checks every bar's length.
 */
function parseVoice(text, { bar = null, label = '?' } = {}) {
  const notes = [];
  let at = 0;
  let dur = PPQ;
  let barStart = 0;
  let barNo = 1;
  const closeBar = () => {
    if (bar !== null && at - barStart !== Math.round(bar * PPQ)) {
      throw new Error(`${label}: bar ${barNo} lasts ${(at - barStart) / PPQ} beats, expected ${bar}`);
    }
    barStart = at;
    barNo += 1;
  };
  for (const token of text.trim().split(/\s+/)) {
    if (token === '|') {
      closeBar();
      continue;
    }
    const [body, d] = token.split(':');
    if (d !== undefined) dur = ticksOf(d);
    if (body !== 'r') {
      for (const name of body.split('+')) notes.push({ ticks: at, durationTicks: dur, pitch: pitchOf(name) });
    }
    at += dur;
  }
  closeBar();
  return { notes, length: at };
}

// ---------------------------------------------------------------------------
// Dynamics: a plain, deterministic accent pattern.

function velocityOf(ticks, timeSignature, role) {
  const barTicks = Math.round(barBeats(timeSignature) * PPQ);
  const pos = ticks % barTicks;
  const compound = timeSignature[1] === 8 && timeSignature[0] % 3 === 0;
  const groupTicks = compound ? (3 * PPQ) / 2 : PPQ;
  let v = role === 'melody' ? 78 : 62;
  if (pos === 0) v += 16;
  else if (timeSignature[0] === 4 && timeSignature[1] === 4 && pos === 2 * PPQ) v += 9;
  else if (pos % groupTicks === 0) v += 6;
  return v;
}

// ---------------------------------------------------------------------------
// Keys

const TONIC_FIFTHS = { C: 0, G: 1, D: 2, A: 3, E: 4, B: 5, 'F#': 6, 'C#': 7, F: -1, Bb: -2, Eb: -3, Ab: -4, Db: -5, Gb: -6, Cb: -7 };
// The key names @tonejs/midi uses for SMF key signatures, indexed by sharps + 7.
const SIGNATURE_NAMES = ['Cb', 'Gb', 'Db', 'Ab', 'Eb', 'Bb', 'F', 'C', 'G', 'D', 'A', 'E', 'B', 'F#', 'C#'];
const MINOR_TONIC_FIFTHS = { A: 0, E: 1, B: 2, 'F#': 3, 'C#': 4, 'G#': 5, 'D#': 6, D: -1, G: -2, C: -3, F: -4, Bb: -5, Eb: -6 };

/** The key signature event @tonejs/midi expects: `key` names the signature (its major key). */
function keySignatureOf({ tonic, mode }) {
  const fifths = mode === 'major' ? TONIC_FIFTHS[tonic] : MINOR_TONIC_FIFTHS[tonic];
  if (fifths === undefined) throw new Error(`unknown key ${tonic} ${mode}`);
  return { key: SIGNATURE_NAMES[fifths + 7], scale: mode, ticks: 0 };
}

// ---------------------------------------------------------------------------
// The corpus: twelve tunes from the Tidewright Hall tune book (see README.md).

const MELODY = { channel: 1, program: 40, role: 'melody' }; // violin
const ACCOMP = { channel: 2, program: 21, role: 'accompaniment' }; // accordion

const TUNES = [
  {
    title: 'The Net-Mender of Saltmarrow',
    kind: 'reel',
    key: { tonic: 'D', mode: 'major' },
    bpm: 112,
    timeSignature: [4, 4],
    voices: [
      { ...MELODY, text: `
        a4:.5 d5 f#5 d5 a4 d5 f#5 a5 | b5:1 a5:.5 f#5 g5 e5 c#5 e5 | d5:.5 f#5 e5 d5 b4 d5 a4 f#4 | g4:.5 b4 e5 d5 c#5:1 a4:1 |
        d5:.5 e5 f#5 g5 a5 b5 a5 f#5 | g5:.5 e5 c#5 e5 a5:1 g5:.5 e5 | f#5:.5 a5 d6 a5 g5 e5 c#5 e5 | d5:1 f#4:.5 a4 d5:2` },
      { ...ACCOMP, text: `
        d3:2 a2 | g2 a2 | d3 b2 | e3 a2 |
        d3 g2 | a2 a2 | d3 a2 | d3 d2` },
    ],
  },
  {
    title: 'Rain on Tidewright Quay',
    kind: 'jig',
    key: { tonic: 'E', mode: 'minor' },
    bpm: 168,
    timeSignature: [6, 8],
    voices: [
      { ...MELODY, text: `
        e5:.5 b4 e5 g5:1 e5:.5 | f#5:.5 d5 f#5 a5:1 f#5:.5 | g5:.5 f#5 e5 d5 b4 a4 | b4:1 e5:.5 e5:1.5 |
        g5:.5 a5 b5 b5:1 a5:.5 | g5:.5 e5 d5 e5:1 b4:.5 | d5:.5 e5 f#5 g5 f#5 d5 | e5:1 b4:.5 e5:1.5` },
      { ...ACCOMP, text: `
        e3:1.5 b2 | d3 a2 | c3 d3 | e3 b2 |
        e3 g3 | c3 b2 | d3 b2 | e3 e2` },
    ],
  },
  {
    title: "The Cooper's Lantern",
    kind: 'waltz',
    key: { tonic: 'G', mode: 'major' },
    bpm: 138,
    timeSignature: [3, 4],
    voices: [
      { ...MELODY, text: `
        d5:2 b4:.5 c5 | d5:1 g4 a4:.5 b4 | c5:1 e5 c5 | b4:2 g4:1 |
        a4:1 b4:.5 c5 d5:1 | e5:1 d5:.5 c5 b4 a4 | b4:1 a4:.5 g4 f#4:1 | g4:3` },
      { ...ACCOMP, text: `
        g2:1 b3+d4 b3+d4 | g2 b3+d4 b3+d4 | c3 c4+e4 c4+e4 | g2 b3+d4 b3+d4 |
        d3 a3+d4 a3+d4 | c3 c4+e4 c4+e4 | d3 a3+c4 a3+c4 | g2 b3+d4 r` },
    ],
  },
  {
    title: 'Gannets over Skerrow',
    kind: 'hornpipe',
    key: { tonic: 'A', mode: 'minor' },
    bpm: 96,
    timeSignature: [4, 4],
    voices: [
      { ...MELODY, text: `
        a4:.75 c5:.25 e5:.75 a5:.25 g5:.75 e5:.25 c5:.75 e5:.25 | d5:.75 f5:.25 a5:.75 f5:.25 e5:1 c5:1 |
        b4:.75 d5:.25 g5:.75 d5:.25 b4:.75 g4:.25 b4:.75 d5:.25 | e5:.75 d5:.25 c5:1 a4:1 r:1 |
        e5:.75 g5:.25 c6:.75 g5:.25 a5:.75 g5:.25 e5:.75 c5:.25 | f5:.75 e5:.25 d5:.75 c5:.25 b4:.75 c5:.25 d5:.75 b4:.25 |
        c5:.75 e5:.25 a5:.75 e5:.25 f5:.75 d5:.25 b4:.75 g#4:.25 | a4:1 e4:1 a4:2` },
      { ...ACCOMP, text: `
        a2:2 a2 | d3 a2 | g2 g2 | a2 e2 |
        c3 a2 | d3 g2 | a2 e2 | a2:2 a2` },
    ],
  },
  {
    title: 'The Ninth Buoy',
    kind: 'jig',
    key: { tonic: 'F', mode: 'major' },
    bpm: 156,
    timeSignature: [6, 8],
    voices: [
      { ...MELODY, text: `
        c5:1 f5:.5 a5:1 f5:.5 | g5:.5 f5 e5 d5:1 c5:.5 | bb4:.5 c5 d5 c5 a4 f4 | g4:1 a4:.5 bb4:1.5 |
        a4:.5 c5 f5 f5:1 e5:.5 | d5:.5 f5 bb5 a5 g5 e5 | f5:1 c5:.5 a4 g4 e4 | f4:1 c4:.5 f4:1.5` },
      { ...ACCOMP, text: `
        f3:1.5 f3 | c3 bb2 | bb2 f2 | c3 c3 |
        f3 a2 | bb2 c3 | f2 c3 | f2 f2` },
    ],
  },
  {
    title: 'The Bell under Quellan Sound',
    kind: 'slow air',
    key: { tonic: 'D', mode: 'minor' },
    bpm: 76,
    timeSignature: [3, 4],
    voices: [
      { ...MELODY, text: `
        a4:1 d5:1.5 e5:.5 | f5:1 e5:.5 d5 c5:1 | a4:2 g4:1 | f4:1 g4:.5 a4 d4:1 |
        f5:1 a5:1.5 g5:.5 | f5:.5 e5 d5:1 c#5:1 | d5:1 bb4:.5 a4 g4 e4 | d4:3` },
      { ...ACCOMP, text: `
        d3:3 | f2 | c3 | d3 |
        bb2 | a2 | g2 | d3` },
      { ...ACCOMP, text: `
        r:1 f3+a3:2 | r:1 a3+c4:2 | r:1 e3+g3:2 | r:1 f3+a3:2 |
        r:1 d3+f3:2 | r:1 c#3+e3:2 | r:1 bb2+d3:2 | r:1 f3+a3:2` },
    ],
  },
  {
    title: 'The Ropewalk Stomp',
    kind: 'stomp',
    key: { tonic: 'A', mode: 'major' },
    bpm: 120,
    timeSignature: [4, 4],
    voices: [
      { ...MELODY, text: `
        a4:.5 c#5 e5:1 a5:.5 e5:1 c#5:.5 | d5:.5 f#5 a5:1 f#5:.5 d5 b4:1 | c#5:.5 e5 a5 g#5 f#5 e5 d5 c#5 | b4:.5 e5 g#4 b4 a4:2 |
        e5:.5 e5 a5:1 e5:.5 e5 c#5:1 | d5:.5 d5 f#5:1 b4:.5 d5 f#5:1 | e5:.5 c#5 a4 c#5 b4 g#4 e4 g#4 | a4:1 e4:1 a4:2` },
      { ...ACCOMP, text: `
        a2:1 e3 a2 e3 | d3 a2 d3 a2 | a2 c#3 d3 d#3 | e3 e2 a2 e2 |
        a2 e3 a2 e3 | d3 a2 b2 d3 | e3 c#3 b2 g#2 | a2 e2 a2:2` },
    ],
  },
  {
    title: 'The Herring-Fog Jig',
    kind: 'jig',
    key: { tonic: 'B', mode: 'minor' },
    bpm: 160,
    timeSignature: [6, 8],
    voices: [
      { ...MELODY, text: `
        f#5:.5 e5 d5 c#5 d5 b4 | a4:1 b4:.5 c#5:1 a4:.5 | f#5:.5 e5 d5 e5 f#5 g5 | a5:1 f#5:.5 e5:1.5 |
        d5:.5 c#5 b4 f#4 b4 d5 | c#5:.5 a4 c#5 e5:1 c#5:.5 | d5:.5 f#5 b5 a5 f#5 e5 | f#5:.5 d5 c#5 b4:1.5` },
      { ...ACCOMP, text: `
        b2:1.5 f#2 | a2 e2 | d3 e3 | a2 a2 |
        b2 b2 | a2 a2 | b2 d3 | f#2 b2` },
    ],
  },
  {
    title: "The Harbourmaster's Clock",
    kind: 'march',
    key: { tonic: 'C', mode: 'major' },
    bpm: 104,
    timeSignature: [4, 4],
    voices: [
      { ...MELODY, text: `
        g4:1 c5 g4 e5 | g4:1 c5 g4 f5 | e5:.5 f5 g5:1 f5:.5 e5 d5:1 | c5:.5 d5 e5 c5 g4:2 |
        a4:1 d5 f5 a5 | g5:.5 f5 e5 d5 c5:1 e5 | d5:.5 e5 f5 d5 b4 c5 d5 b4 | c5:1 g4 c5:2` },
      { ...ACCOMP, text: `
        c3:2 g2 | b2 g2 | c3 b2 | a2 g2 |
        f2 d3 | c3 e3 | g2 b2 | c3 c2` },
    ],
  },
  {
    title: 'Slipway Mazurka',
    kind: 'mazurka',
    key: { tonic: 'Bb', mode: 'major' },
    bpm: 126,
    timeSignature: [3, 4],
    voices: [
      { ...MELODY, text: `
        f4:.75 bb4:.25 d5:1 d5:1 | c5:.75 eb5:.25 g5:1 f5:1 | eb5:.5 d5 c5 bb4 a4 bb4 | c5:1 f4:2 |
        g4:.75 a4:.25 bb4:1 eb5:1 | d5:.75 c5:.25 bb4:1 g4:1 | f4:.5 a4 c5 eb5 d5 c5 | bb4:3` },
      { ...ACCOMP, text: `
        bb2:1 d3+f3:2 | c3:1 eb3+g3:2 | f2:1 eb3+a3:2 | f2:1 c3+a3:2 |
        eb3:1 g3+bb3:2 | g2:1 d3+bb3:2 | f2:1 eb3+a3:2 | bb2:1 d3+f3:2` },
    ],
  },
  {
    title: 'The Gutting-Shed March',
    kind: 'march',
    key: { tonic: 'G', mode: 'minor' },
    bpm: 100,
    timeSignature: [4, 4],
    voices: [
      { ...MELODY, text: `
        g4:1 d5:1 d5:.5 c5 bb4 a4 | bb4:.25 c5 d5:.5 g5:1 f5:1 d5:1 | eb5:1 c5:.5 eb5 d5:1 bb4:1 | a4:.25 bb4 c5:.5 d5:1 g4:2 |
        g5:1 f5:.5 eb5 d5:1 g5:1 | f5:.25 eb5 d5:.5 c5:1 a4:1 f4:1 | bb4:.5 c5 d5 eb5 d5:.25 c5 bb4:.5 a4:1 | g4:1 d4:1 g4:2` },
      { ...ACCOMP, text: `
        g2:2 d3 | g2 bb2 | c3 g2 | d3 g2 |
        eb3 bb2 | f2 f3 | c3 d3 | d3 g2` },
    ],
  },
  {
    title: 'Skerrow Light',
    kind: 'strathspey',
    key: { tonic: 'E', mode: 'major' },
    bpm: 84,
    timeSignature: [4, 4],
    voices: [
      { ...MELODY, text: `
        e4:.25 g#4:.75 b4:.75 e5:.25 g#5:1 e5:1 | f#5:.25 d#5:.75 b4:.75 d#5:.25 f#5:1 b4:1 |
        c#5:.75 e5:.25 a5:.75 g#5:.25 f#5:.25 e5:.75 c#5:1 | b4:.75 g#4:.25 e4:.75 g#4:.25 b4:2 |
        g#5:.25 e5:.75 b5:.75 g#5:.25 e5:.25 c#5:.75 b4:1 | a4:.75 c#5:.25 e5:.75 c#5:.25 f#5:.25 d#5:.75 b4:1 |
        e5:.25 g#5:.75 f#5:.75 e5:.25 d#5:.75 f#5:.25 b4:1 | e5:1 b4:.5 g#4:.5 e4:2` },
      { ...ACCOMP, text: `
        e2:2 e3 | b2 b2 | a2 f#2 | e3 e2 |
        e3 c#3 | a2 b2 | e3 b2 | e3 e2` },
    ],
  },
];

// ---------------------------------------------------------------------------
// Building pieces

/** A piece's notes, in ticks, with channel and velocity. */
function notesOfVoices(voices, timeSignature, label) {
  const out = [];
  for (const [i, v] of voices.entries()) {
    const { notes } = parseVoice(v.text, { bar: barBeats(timeSignature), label: `${label}, voice ${i + 1}` });
    for (const n of notes) out.push({ ...n, channel: v.channel, role: v.role });
  }
  return out;
}

function finish(notes, timeSignature) {
  return notes
    .map((n) => ({ ...n, velocity: n.velocity ?? velocityOf(n.ticks, timeSignature, n.role) }))
    .sort((a, b) => a.ticks - b.ticks || a.channel - b.channel || a.pitch - b.pitch);
}

function kebab(title) {
  return title
    .toLowerCase()
    .replace(/'/g, '')
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-|-$/g, '');
}

const PROGRAMS = { 1: MELODY.program, 2: ACCOMP.program };
const ROLE_NAMES = { 1: '', 2: ' (accompaniment)' };

/** A Standard MIDI File (bytes) for a piece. */
function toMidi({ title, key, bpm, timeSignature, notes }) {
  const midi = new Midi();
  midi.header.name = title;
  midi.header.setTempo(bpm);
  midi.header.keySignatures.push(keySignatureOf(key));
  midi.header.timeSignatures.push({ ticks: 0, timeSignature: [...timeSignature] });
  midi.header.update();
  const channels = [...new Set(notes.map((n) => n.channel))].sort((a, b) => a - b);
  for (const ch of channels) {
    const track = midi.addTrack();
    track.name = title + (ROLE_NAMES[ch] ?? ` (channel ${ch})`);
    track.channel = ch - 1;
    track.instrument.number = PROGRAMS[ch] ?? 0;
    for (const n of notes.filter((x) => x.channel === ch)) {
      // @tonejs/midi writes floor(velocity * 127): nudge by half a step so the
      // integer velocity survives the round trip exactly.
      track.addNote({ midi: n.pitch, ticks: n.ticks, durationTicks: n.durationTicks, velocity: (n.velocity + 0.5) / 127 });
    }
  }
  return fixKeySignature(midi.toArray(), SIGNATURE_NAMES.indexOf(keySignatureOf(key).key) - 7);
}

/**
 * @tonejs/midi 2.0.28 encodes a key signature's sharps/flats byte as
 * (index in its name list + 7) instead of (index − 7), so D major comes out
 * as sf = 16, which no reader understands (it reads back as key undefined).
 * Rewrite that byte with the right value through midi-file, the library
 * @tonejs/midi itself writes with; everything else is left byte-identical.
 */
function fixKeySignature(bytes, fifths) {
  const data = parseMidi(bytes);
  let fixed = 0;
  for (const track of data.tracks) {
    for (const event of track) {
      if (event.type === 'keySignature') {
        event.key = fifths;
        fixed += 1;
      }
    }
  }
  if (fixed !== 1) throw new Error(`expected one key signature event, found ${fixed}`);
  const out = Buffer.from(writeMidi(data));
  const check = new Midi(out).header.keySignatures;
  if (check.length !== 1 || check[0].key !== SIGNATURE_NAMES[fifths + 7]) throw new Error('key signature did not survive the round trip');
  return out;
}

/** The JSON form of a note: beats, MIDI pitch, velocity 0–127, channel 1–16. */
function noteJson(n) {
  return { onset: n.ticks / PPQ, duration: n.durationTicks / PPQ, pitch: n.pitch, velocity: n.velocity, channel: n.channel };
}

function lengthBeats(notes) {
  return Math.max(...notes.map((n) => n.ticks + n.durationTicks)) / PPQ;
}

// ---------------------------------------------------------------------------
// Corpus

const corpus = TUNES.map((t) => {
  const notes = finish(notesOfVoices(t.voices, t.timeSignature, t.title), t.timeSignature);
  return { ...t, file: `${kebab(t.title)}.mid`, notes };
});
const byTitle = new Map(corpus.map((t) => [t.title, t]));

// ---------------------------------------------------------------------------
// Queries

/** Places notation `text` at `beat`, on `channel`. Bars are not checked (segments may start mid-bar). */
function segment(beat, text, { channel = 1, role = channel === 1 ? 'melody' : 'accompaniment', expect = null } = {}) {
  const { notes, length } = parseVoice(text, { label: `segment at beat ${beat}` });
  if (expect !== null && length !== Math.round(expect * PPQ)) {
    throw new Error(`segment at beat ${beat} lasts ${length / PPQ} beats, expected ${expect}`);
  }
  return notes.map((n) => ({ ...n, ticks: n.ticks + Math.round(beat * PPQ), channel, role }));
}

/** The notes of `tune` with onsets in [from, to) beats, moved by `shift` beats and `transpose` semitones. */
function excerpt(tune, from, to, { shift = 0, transpose = 0, channels = null } = {}) {
  return tune.notes
    .filter((n) => n.ticks >= from * PPQ && n.ticks < to * PPQ && (channels === null || channels.includes(n.channel)))
    .map((n) => ({ ...n, ticks: n.ticks + Math.round(shift * PPQ), pitch: n.pitch + transpose }));
}

function moved(notes, { shift = 0, transpose = 0 }) {
  return notes.map((n) => ({ ...n, ticks: n.ticks + Math.round(shift * PPQ), pitch: n.pitch + transpose }));
}

// quote.mid: bars 5–7 of "The Net-Mender of Saltmarrow" (beats 16–28, melody and bass),
// verbatim, transposed up 5 semitones (D major → G major) and moved from beat 16 to beat 6
// (a shift of −10 beats), inside new material.
const QUOTE = { tune: 'The Net-Mender of Saltmarrow', from: 16, to: 28, shift: -10, transpose: 5 };
const quoteTS = [4, 4];
const quote = {
  title: 'The Borrowed Oar',
  key: { tonic: 'G', mode: 'major' },
  bpm: 112,
  timeSignature: quoteTS,
  notes: finish(
    [
      ...segment(0, 'b4:1 d5:.5 c5 b4:1 a4:.5 g4 a4 b4 c5 e5', { expect: 6 }),
      ...segment(0, 'g2:2 d3 c3', { channel: 2, expect: 6 }),
      ...excerpt(byTitle.get(QUOTE.tune), QUOTE.from, QUOTE.to, { shift: QUOTE.shift, transpose: QUOTE.transpose }),
      ...segment(18, 'g5:.5 e5 c5 e5 d5:1 b4:.5 g4 a4:1 c5:1 b4:.5 a4 g4 b4 e5:1 d5:1 c5:.5 a4 f#4 a4 g4:2', { expect: 14 }),
      ...segment(18, 'c3:2 g2 b2 e3 c3 d3 g2', { channel: 2, expect: 14 }),
    ].map(({ velocity, ...n }) => n),
    quoteTS,
  ),
};

// fresh.mid: entirely new material (A minor, 3/4).
const freshTS = [3, 4];
const fresh = {
  title: 'Chandlery Steps',
  key: { tonic: 'A', mode: 'minor' },
  bpm: 112,
  timeSignature: freshTS,
  notes: finish(
    notesOfVoices(
      [
        { ...MELODY, text: `
          e5:1 a5:.5 g5 e5:1 | d5:.5 e5 c5:2 | b4:1 g4:.5 a4 b4 d5 | c5:.5 b4 a4:2 |
          a5:1 g5:.5 a5 b5:1 | c6:.5 b5 a5 g5 e5:1 | f5:.5 e5 d5 b4 g#4:1 | a4:3` },
        { ...ACCOMP, text: `
          a2:2 e3:1 | a2:2 e3:1 | g2:2 d3:1 | a2:2 e3:1 |
          f2:2 c3:1 | c3:2 e3:1 | d3:2 e3:1 | a2:3` },
      ],
      freshTS,
      'fresh',
    ),
    freshTS,
  ),
};

// variation.mid: a loose variation on all of "Rain on Tidewright Quay" (melody, beats 0–24).
// Written against the original in E minor, then moved down 2 semitones (→ D minor) and
// 3 beats later, after one new bar. 12 of the phrase's 38 notes are kept (same place,
// pitch and duration); the other 26 are changed; the bass is new.
const VARIATION = { tune: 'Rain on Tidewright Quay', from: 0, to: 24, shift: 3, transpose: -2 };
const variationTS = [6, 8];
const variationPhrase = notesOfVoices(
  [
    { ...MELODY, text: `
      e5:.5 g5 b5 g5:1 f#5:.5 | e5:.5 c5 e5 a5:1 g5:.5 | f#5:.5 g5 e5 c5 b4 g4 | a4:1 b4:.5 e5:1.5 |
      g5:.5 f#5 e5 b5:1 f#5:.5 | f#5:.5 d5 b4 c5:1 b4:.5 | a4:.5 c5 e5 g5 f#5 e5 | d#5:1 f#5:.5 e5:1.5` },
  ],
  variationTS,
  'variation',
);
const variation = {
  title: 'Wet Ropes at Tidewright',
  key: { tonic: 'D', mode: 'minor' },
  bpm: 168,
  timeSignature: variationTS,
  notes: finish(
    [
      ...segment(0, 'a4:.5 d5 e5 f5:1 e5:.5', { expect: 3 }),
      ...moved(variationPhrase, { shift: VARIATION.shift, transpose: VARIATION.transpose }),
      ...segment(0, 'd3:1.5 a2 | d3 a2 | g2 bb2 | bb2 d3 | a2 d3 | d3 a2 | a2 g2 | g2 bb2 | a2 d3', { channel: 2, expect: 27 }),
    ],
    variationTS,
  ),
};

// cadence.mid: new material (G major) whose last two bars are a stock figure: a descending
// one-octave scale run g5–g4 in quavers, then the 2–7–1 cadence a4 f#4 g4 over V–I.
const cadenceTS = [4, 4];
const cadence = {
  title: 'Closing Time at Tidewright Hall',
  key: { tonic: 'G', mode: 'major' },
  bpm: 100,
  timeSignature: cadenceTS,
  notes: finish(
    notesOfVoices(
      [
        { ...MELODY, text: `
          b4:1 d5:.5 b4 a4:1 e5:1 | d5:1.5 b4:.5 g4:2 | c5:1 e5:.5 c5 b4:1 d5:1 | a4:1 f#4:.5 a4 d5:2 |
          g5:.5 f#5 e5 d5 c5 b4 a4 g4 | a4:1 f#4:1 g4:2` },
        { ...ACCOMP, text: `
          g2:2 e3 | g2 b2 | c3 a2 | d3 d2 |
          e3:1 c3 a2 c3 | d3:1 d2 g2:2` },
      ],
      cadenceTS,
      'cadence',
    ),
    cadenceTS,
  ),
};

const QUERIES = [
  { file: 'quote.mid', piece: quote },
  { file: 'fresh.mid', piece: fresh },
  { file: 'variation.mid', piece: variation },
  { file: 'cadence.mid', piece: cadence },
];

// ---------------------------------------------------------------------------
// Output

mkdirSync(join(HERE, 'corpus'), { recursive: true });
mkdirSync(join(HERE, 'queries'), { recursive: true });

const tunesJson = {
  description: 'The earwitness demo corpus: twelve tunes from the tune book of the Tidewright Hall fiddle club (an invented setting). All music original to this project. Onsets and durations in beats (quarter notes); pitch as MIDI note number; velocity 0–127; channel 1–16.',
  generatedBy: 'presets/demo/compose.mjs',
  tunes: corpus.map((t) => ({
    title: t.title,
    file: `corpus/${t.file}`,
    kind: t.kind,
    key: t.key,
    bpm: t.bpm,
    timeSignature: t.timeSignature,
    notes: t.notes.map(noteJson),
  })),
};

// One note per line keeps the file readable and its diffs small.
function formatTunes(doc) {
  const lines = ['{'];
  lines.push(`  "description": ${JSON.stringify(doc.description)},`);
  lines.push(`  "generatedBy": ${JSON.stringify(doc.generatedBy)},`);
  lines.push('  "tunes": [');
  doc.tunes.forEach((t, i) => {
    lines.push('    {');
    for (const k of ['title', 'file', 'kind', 'key', 'bpm', 'timeSignature']) {
      lines.push(`      ${JSON.stringify(k)}: ${JSON.stringify(t[k]).replace(/,"/g, ', "').replace(/":/g, '": ').replace(/,(\d)/g, ', $1')},`);
    }
    lines.push('      "notes": [');
    t.notes.forEach((n, j) => {
      const body = JSON.stringify(n).replace(/,"/g, ', "').replace(/":/g, '": ');
      lines.push(`        ${body}${j < t.notes.length - 1 ? ',' : ''}`);
    });
    lines.push('      ]');
    lines.push(`    }${i < doc.tunes.length - 1 ? ',' : ''}`);
  });
  lines.push('  ]');
  lines.push('}');
  const text = lines.join('\n') + '\n';
  JSON.parse(text); // must stay valid JSON
  return text;
}

writeFileSync(join(HERE, 'tunes.json'), formatTunes(tunesJson));

for (const t of corpus) {
  writeFileSync(join(HERE, 'corpus', t.file), toMidi(t));
}
for (const q of QUERIES) {
  writeFileSync(join(HERE, 'queries', q.file), toMidi(q.piece));
}

for (const t of corpus) {
  console.log(`corpus/${t.file.padEnd(36)} ${String(t.notes.length).padStart(3)} notes  ${lengthBeats(t.notes)} beats  ${t.title}`);
}
for (const q of QUERIES) {
  console.log(`queries/${q.file.padEnd(35)} ${String(q.piece.notes.length).padStart(3)} notes  ${lengthBeats(q.piece.notes)} beats  ${q.piece.title}`);
}
