/**
 * The MIDI path, end to end in process: a port that emits exactly what
 * easymidi's Input emits (`noteon`/`noteoff` {note, velocity, channel 0–15},
 * `clock`, `start`, `continue`, `stop`, `position` {value}) drives the daemon;
 * beat positions follow MIDI 1.0 (24 clocks a quarter note; Start = position
 * 0; SPP in sixteenths, so SPP 8 = beat 2.0; a note-on with velocity 0 is a
 * note-off — ../shared/reference/check-values.md). The scoring worker runs
 * from dist/, as in the CLI.
 */
import { EventEmitter } from 'node:events';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Daemon, startDaemon } from '../../../bridge/daemon/daemon.js';
import type { DaemonEvent, NoteEvent, WarningEvent } from '../../../contract/events.js';
import { loadPreset, withOverrides } from '../../../bridge/formats/presets.js';
import { SessionLog } from '../../../bridge/formats/session-log.js';
import { WORKER_URL, type TestCorpus, passage, tempDir, writeCorpus } from '../../helpers/daemon.js';

describe('MIDI in, through an in-process port', () => {
  const port = new EventEmitter();
  let corpus: TestCorpus;
  let daemon: Daemon;
  let log: string;
  const events: DaemonEvent[] = [];
  const notices: string[] = [];
  /** Resolves at the first event (seen or to come) passing `test`. */
  const next = (test: (e: DaemonEvent) => boolean): Promise<DaemonEvent> =>
    new Promise((resolve) => {
      const seen = events.find(test);
      if (seen) return resolve(seen);
      daemon.onEvent((e) => test(e) && resolve(e));
    });

  beforeAll(async () => {
    corpus = writeCorpus();
    log = join(tempDir('midi'), 'sessions.db');
    daemon = await startDaemon({
      corpus: corpus.dir,
      preset: withOverrides(loadPreset('jam'), { consecutive: '3' }),
      oscPort: 0,
      httpPort: 0,
      oscOut: null,
      midi: { input: null, thru: null, channels: new Set([1]) },
      log,
      midiSource: port,
      workerUrl: WORKER_URL,
      notice: (line) => notices.push(line),
    });
    daemon.onEvent((e) => events.push(e));
  });
  afterAll(async () => {
    await daemon?.stop();
  });

  it('says MIDI is open and, with a MIDI preset and MIDI open, does not listen to OSC', () => {
    expect(daemon.status.midi).toEqual({ available: true, detail: 'in-process port' });
    expect(daemon.status.osc).toBeNull();
  });

  it('a passage played over MIDI clock from Start warns, naming the piece and the transposition', async () => {
    // Beats 8–24 of one piece, 3 semitones down, played from song position 0 on channel 1 (0 on the wire).
    const played = passage(corpus.pieces['brinewater.mid'], 8, 24, 0, -3);
    const onsAt = new Map<number, typeof played>();
    const offsAt = new Map<number, typeof played>();
    for (const n of played) {
      const on = Math.round(n.onset * 24);
      const off = Math.round((n.onset + n.duration) * 24);
      onsAt.set(on, [...(onsAt.get(on) ?? []), n]);
      offsAt.set(off, [...(offsAt.get(off) ?? []), n]);
    }
    port.emit('start');
    let seq = 0;
    for (let clock = 0; clock <= 16 * 24; clock++) {
      port.emit('clock');
      for (const n of offsAt.get(clock) ?? []) port.emit('noteon', { note: n.pitch, velocity: 0, channel: 0 }); // velocity 0 = off
      for (const n of onsAt.get(clock) ?? []) {
        port.emit('noteon', { note: n.pitch, velocity: 96, channel: 0 });
        port.emit('noteon', { note: 30, velocity: 96, channel: 1 }); // channel 2: not watched
        port.emit('noteoff', { note: 30, velocity: 0, channel: 1 });
        seq++;
        const s = seq;
        await next((e) => e.type === 'score' && e.seq === s); // one evaluation per note, as a player's pace allows
      }
    }
    const warning = (await next((e) => e.type === 'warning')) as WarningEvent;
    expect(warning.piece).toBe('brinewater.mid');
    expect(warning.transposition).toBe(-3);
    expect(warning.startBeat - warning.pieceStart).toBeCloseTo(-8, 9);
    // Onsets are stamped from the clock as the notes arrive, a few ms after their clock here: within a clock of it.
    const notes = events.filter((e): e is NoteEvent => e.type === 'note');
    expect(notes.length).toBe(played.length);
    notes.forEach((n, i) => {
      expect(Math.abs(n.onset - played[i].onset)).toBeLessThan(1 / 24);
      expect(Math.abs(n.duration - played[i].duration)).toBeLessThan(1 / 24);
    });
    expect(notes.every((n) => n.channel === 1)).toBe(true);
    expect(daemon.health().notes).toBe(played.length);
  });

  it('Stop, SPP 8 and Continue: the next note sounds at beat 2.0', async () => {
    port.emit('stop');
    port.emit('position', { value: 8 });
    port.emit('continue');
    port.emit('clock');
    port.emit('noteon', { note: 20, velocity: 80, channel: 0 });
    for (let i = 0; i < 12; i++) port.emit('clock');
    port.emit('noteoff', { note: 20, velocity: 0, channel: 0 });
    const note = (await next((e) => e.type === 'note' && e.pitch === 20)) as NoteEvent;
    expect(Math.abs(note.onset - 2)).toBeLessThan(1 / 24);
    expect(Math.abs(note.duration - 0.5)).toBeLessThan(1 / 24);
  });

  it('logged every note heard, whole, with its duration, numbered from 1', async () => {
    const heard = events.filter((e): e is NoteEvent => e.type === 'note');
    await daemon.stop();
    const reader = SessionLog.open(log, { readonly: true });
    const s = reader.session('latest')!;
    reader.close();
    expect(s.summary.end).not.toBeNull();
    expect(s.notes.map((n) => [n.seq, n.onset, n.duration, n.pitch, n.channel])).toEqual(heard.map((n) => [n.seq, n.onset, n.duration, n.pitch, n.channel]));
    expect(s.notes.map((n) => n.seq)).toEqual(s.notes.map((_, i) => i + 1));
    expect(s.warnings.map((w) => [w.piece, w.transposition])).toEqual([['brinewater.mid', -3]]);
    expect(notices).toEqual([]);
  });
});
