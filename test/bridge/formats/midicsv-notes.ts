/**
 * Notes of a Standard MIDI File as Debian's `midicsv` reads it (midicsv(1):
 * `track, time, type, …`; Note_on_c/Note_off_c as `channel, note,
 * velocity`), in beats: the outside reading the format tests compare with.
 * MIDI 1.0: a Note On with velocity 0 is a Note Off, and each off ends the
 * earliest open note of its track, channel and key.
 *
 * @example
 *   midicsvNotes('/usr/bin/midicsv', 'tune.mid')   // → [{ onset: 0, end: 1, pitch: 62, channel: 1 }, …]
 */
import { execFileSync } from 'node:child_process';

export interface HeardNote {
  onset: number;
  end: number;
  pitch: number;
  /** 1–16. */
  channel: number;
}

export function midicsvNotes(midicsv: string, file: string): HeardNote[] {
  const csv = execFileSync(midicsv, [file], { encoding: 'latin1' });
  let ppq = 0;
  const open = new Map<string, number[]>();
  const notes: HeardNote[] = [];
  for (const line of csv.split('\n')) {
    const [track, time, type, ...rest] = line.split(', ');
    if (type === 'Header') ppq = Number(rest[2]);
    if (type !== 'Note_on_c' && type !== 'Note_off_c') continue;
    const [channel, pitch, velocity] = rest.map(Number);
    const key = `${track}:${channel}:${pitch}`;
    const tick = Number(time);
    if (type === 'Note_on_c' && velocity > 0) open.set(key, [...(open.get(key) ?? []), tick]);
    else {
      const from = open.get(key)?.shift();
      if (from !== undefined) notes.push({ onset: from / ppq, end: tick / ppq, pitch, channel: channel + 1 });
    }
  }
  return notes.sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
}
