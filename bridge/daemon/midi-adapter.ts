/**
 * MIDI in, as logic: a port that emits what `easymidi` emits — `noteon` /
 * `noteoff` {note, velocity, channel 0–15}, `clock`, `start`, `continue`,
 * `stop`, `position` {value} — turned into the daemon's input commands.
 * Channels are filtered as musicians count them (1–16); a note-on with
 * velocity 0 is a note-off (MIDI 1.0). The port itself is opened in
 * midi-input.ts; tests feed this an in-process emitter instead.
 *
 * @example
 *   const detach = attachMidi(port, { channels: new Set([1, 2]) }, (cmd, atMs) => daemon.handle(cmd, atMs));
 *   port.emit('noteon', { note: 60, velocity: 100, channel: 0 });   // → { kind: 'on', pitch: 60, velocity: 100, channel: 1 }
 */
import type { InputCommand } from './input.js';

export interface MidiNoteMessage {
  note: number;
  velocity: number;
  /** 0–15, as on the wire. */
  channel: number;
}

/** The events of an easymidi Input the daemon listens to. */
export interface MidiSource {
  on(event: 'noteon' | 'noteoff', handler: (m: MidiNoteMessage) => void): unknown;
  on(event: 'position', handler: (m: { value: number }) => void): unknown;
  on(event: 'clock' | 'start' | 'continue' | 'stop', handler: () => void): unknown;
  removeAllListeners(): unknown;
}

export interface MidiAdapterOptions {
  /** Channels 1–16 to hear; null = all. */
  channels: ReadonlySet<number> | null;
  now?: () => number;
}

export function attachMidi(source: MidiSource, options: MidiAdapterOptions, onCommand: (command: InputCommand, atMs: number) => void): () => void {
  const now = options.now ?? Date.now;
  const heard = (channel: number): boolean => options.channels === null || options.channels.has(channel + 1);
  const send = (command: InputCommand): void => onCommand(command, now());
  source.on('noteon', (m) => {
    if (!heard(m.channel)) return;
    send(m.velocity === 0 ? { kind: 'off', pitch: m.note, channel: m.channel + 1 } : { kind: 'on', pitch: m.note, velocity: m.velocity, channel: m.channel + 1 });
  });
  source.on('noteoff', (m) => {
    if (heard(m.channel)) send({ kind: 'off', pitch: m.note, channel: m.channel + 1 });
  });
  source.on('clock', () => send({ kind: 'clock' }));
  source.on('start', () => send({ kind: 'start' }));
  source.on('continue', () => send({ kind: 'continue' }));
  source.on('stop', () => send({ kind: 'stop' }));
  source.on('position', (m) => send({ kind: 'position', value: m.value }));
  return () => void source.removeAllListeners();
}
