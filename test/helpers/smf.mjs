/**
 * A tiny Standard MIDI File writer for test fixtures. The bytes are laid out
 * by hand per SMF 1.0 (and MIDI 1.0 for the channel messages), so fixtures
 * hold what real files hold — running status, Note On with velocity 0 as a
 * Note Off, meta events — without trusting any MIDI library to write them.
 * Plain JavaScript so the fixture generator runs under plain `node`.
 *
 * @example
 *   const bytes = smf({ format: 0, ppq: 96, tracks: [track([
 *     [0, noteOn(1, 60, 100)], [96, noteOn(1, 60, 0)], [0, endOfTrack()],
 *   ], { running: true })] });
 */

/** SMF 1.0: a variable-length quantity, 7 bits a byte, high bit set on all but the last. */
export function vlq(n) {
  if (!(Number.isInteger(n) && n >= 0 && n <= 0x0fffffff)) throw new RangeError(`a delta time must be a whole number 0…0x0FFFFFFF, got ${n}`);
  const out = [n & 0x7f];
  for (let v = n >>> 7; v > 0; v >>>= 7) out.unshift((v & 0x7f) | 0x80);
  return out;
}

const channelByte = (channel) => {
  if (!(Number.isInteger(channel) && channel >= 1 && channel <= 16)) throw new RangeError(`channel must be 1–16, got ${channel}`);
  return channel - 1;
};

/** MIDI 1.0 Note On (status 0x9n); velocity 0 means Note Off. Channels are 1–16 as musicians count. */
export const noteOn = (channel, key, velocity) => [0x90 | channelByte(channel), key, velocity];
/** MIDI 1.0 Note Off (status 0x8n). */
export const noteOff = (channel, key, velocity = 64) => [0x80 | channelByte(channel), key, velocity];

const text = (s) => [...Buffer.from(s, 'latin1')];
const meta = (type, data) => [0xff, type, ...vlq(data.length), ...data];
/** SMF 1.0 meta FF 03: sequence or track name. */
export const trackName = (name) => meta(0x03, text(name));
/** SMF 1.0 meta FF 51 03 tttttt: microseconds per quarter note. */
export const tempo = (bpm) => {
  const us = Math.round(60_000_000 / bpm);
  return meta(0x51, [(us >> 16) & 0xff, (us >> 8) & 0xff, us & 0xff]);
};
/** SMF 1.0 meta FF 58 04 nn dd cc bb: nn/2^dd, 24 clocks a click, 8 32nds a quarter. */
export const timeSignature = (numerator, denominator) => meta(0x58, [numerator, Math.log2(denominator), 24, 8]);
/** SMF 1.0 meta FF 59 02 sf mi: sf −7…+7 (flats negative), mi 0 major / 1 minor. */
export const keySignature = (sf, minor) => meta(0x59, [sf & 0xff, minor ? 1 : 0]);
/** SMF 1.0 meta FF 2F 00. */
export const endOfTrack = () => meta(0x2f, []);

/**
 * An MTrk chunk from [delta ticks, event bytes] pairs. With `running`, a
 * channel message whose status equals the previous one is written without
 * it (running status); meta and sysex events cancel running status (SMF 1.0).
 */
export function track(events, { running = false } = {}) {
  const data = [];
  let status = null;
  for (const [delta, bytes] of events) {
    data.push(...vlq(delta));
    const s = bytes[0];
    if (s >= 0xf0) status = null;
    if (running && s < 0xf0 && s === status) data.push(...bytes.slice(1));
    else data.push(...bytes);
    if (s < 0xf0) status = s;
  }
  return chunk('MTrk', data);
}

/** A chunk: its 4-letter id, a 32-bit big-endian length, the data (SMF 1.0). */
export function chunk(id, data) {
  const n = data.length;
  return [...text(id), (n >>> 24) & 0xff, (n >>> 16) & 0xff, (n >>> 8) & 0xff, n & 0xff, ...data];
}

/** A whole file: MThd (length 6: format, track count, ticks per quarter note) then the tracks. */
export function smf({ format, ppq, tracks }) {
  if (!(Number.isInteger(ppq) && ppq > 0 && ppq < 0x8000)) throw new RangeError(`ppq must be 1…32767 ticks per quarter note, got ${ppq}`);
  if (format === 0 && tracks.length !== 1) throw new RangeError(`a format 0 file has exactly one track, got ${tracks.length}`);
  const header = chunk('MThd', [0, format, tracks.length >> 8, tracks.length & 0xff, ppq >> 8, ppq & 0xff]);
  return Uint8Array.from([...header, ...tracks.flat()]);
}

const isOff = (bytes) => (bytes[0] & 0xf0) === 0x80 || ((bytes[0] & 0xf0) === 0x90 && bytes[2] === 0);
/** Meta events first at a tick, then Note Offs, then the rest, so a repeated pitch is released before it is struck again. */
const rank = (bytes) => (bytes[0] === 0xff ? 0 : isOff(bytes) ? 1 : 2);

/** [absolute tick, bytes] events → [delta, bytes] in time order, ready for `track`. */
export function deltas(events) {
  const sorted = events.map((e, i) => ({ e, i })).sort((a, b) => a.e[0] - b.e[0] || rank(a.e[1]) - rank(b.e[1]) || a.i - b.i);
  let now = 0;
  return sorted.map(({ e: [at, bytes] }) => {
    const delta = at - now;
    now = at;
    return [delta, bytes];
  });
}

/**
 * Notes ({ onset, duration, pitch, velocity?, channel? }, in beats) →
 * [absolute tick, bytes] events at `ppq`. `zeroVelocityOff` ends notes with
 * Note On velocity 0 (MIDI 1.0: the same as a Note Off) instead of 0x8n.
 */
export function noteEvents(notes, { ppq, zeroVelocityOff = false }) {
  const ticks = (beats) => {
    const t = Math.round(beats * ppq);
    if (Math.abs(t - beats * ppq) > 1e-6) throw new RangeError(`beat ${beats} does not fall on a tick at ppq ${ppq}`);
    return t;
  };
  return notes.flatMap((n) => {
    if (!(n.duration > 0)) throw new RangeError(`a note needs a positive duration, got ${n.duration} at beat ${n.onset}`);
    const channel = n.channel ?? 1;
    const off = zeroVelocityOff ? noteOn(channel, n.pitch, 0) : noteOff(channel, n.pitch);
    return [[ticks(n.onset), noteOn(channel, n.pitch, n.velocity ?? 90)], [ticks(n.onset + n.duration), off]];
  });
}

/** Notes → one format 0 file at `ppq`: all a corpus piece or a query needs. */
export function notesFile(notes, { ppq = 480 } = {}) {
  return smf({ format: 0, ppq, tracks: [track([...deltas(noteEvents(notes, { ppq })), [0, endOfTrack()]], { running: true })] });
}
