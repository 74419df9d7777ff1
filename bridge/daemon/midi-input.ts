/**
 * The MIDI ports, through `easymidi` (RtMidi underneath): kept thin, since
 * everything that decides anything is in midi-adapter.ts.
 *
 * Where no backend can open — no ALSA sequencer, as on a container or a
 * server — the answer is a status saying so, never a throw: the daemon
 * carries on with OSC. On Linux the sequencer device is looked for first,
 * so RtMidi is not asked (and does not fill stderr with ALSA's complaints)
 * when it cannot work.
 *
 * @example
 *   const midi = await openMidi({ input: null, thru: null });
 *   midi.status   // → { available: true, detail: 'virtual input port "earwitness in"' }
 *                 //   or { available: false, detail: 'no ALSA sequencer (/dev/snd/seq is missing)' }
 *   await listPorts()   // → { inputs: ['Launchkey MIDI 1'], outputs: [...] } or { unavailable: '…' }
 */
import { existsSync } from 'node:fs';
import type { MidiSource } from './midi-adapter.js';
import { UsageError } from '../formats/user-error.js';

export const VIRTUAL_PORT = 'earwitness in';

export interface MidiStatus {
  available: boolean;
  detail: string;
}

export interface OpenMidi {
  source: MidiSource | null;
  status: MidiStatus;
  close(): void;
}

type Easymidi = typeof import('easymidi');

/** The backend, or why there is none. */
async function backend(): Promise<Easymidi | string> {
  if (process.platform === 'linux' && !existsSync('/dev/snd/seq')) return 'no ALSA sequencer (/dev/snd/seq is missing)';
  try {
    const easymidi = (await import('easymidi')) as Easymidi & { default?: Easymidi };
    const api = easymidi.default ?? easymidi;
    api.getInputs();
    return api;
  } catch (e) {
    return (e as Error).message;
  }
}

export async function listPorts(): Promise<{ inputs: string[]; outputs: string[] } | { unavailable: string }> {
  const api = await backend();
  if (typeof api === 'string') return { unavailable: api };
  return { inputs: api.getInputs(), outputs: api.getOutputs() };
}

const portList = (names: string[]): string => (names.length ? names.map((n) => `"${n}"`).join(', ') : 'none');

/**
 * Opens `input` by name, or the virtual port `earwitness in` when none is
 * named; with `thru`, every message heard is sent on to that output port
 * as it arrives.
 */
export async function openMidi(options: { input: string | null; thru: string | null }): Promise<OpenMidi> {
  const none = (detail: string): OpenMidi => ({ source: null, status: { available: false, detail }, close: () => {} });
  const api = await backend();
  if (typeof api === 'string') return none(api);
  if (options.input === null && process.platform === 'win32') return none('virtual ports are not supported on Windows; name an input with --midi-in (earwitness ports lists them)');
  if (options.input !== null && !api.getInputs().includes(options.input)) {
    throw new UsageError(`--midi-in ${options.input}: no such MIDI input; the inputs are ${portList(api.getInputs())}`);
  }
  if (options.thru !== null && !api.getOutputs().includes(options.thru)) {
    throw new UsageError(`--thru ${options.thru}: no such MIDI output; the outputs are ${portList(api.getOutputs())}`);
  }
  let input: InstanceType<Easymidi['Input']>;
  try {
    input = options.input === null ? new api.Input(VIRTUAL_PORT, true) : new api.Input(options.input);
  } catch (e) {
    return none((e as Error).message);
  }
  const thru = options.thru === null ? null : new api.Output(options.thru);
  // No added delay: the raw bytes go out from RtMidi's own callback, ahead of easymidi's parsing and the
  // daemon's handling (easymidi@3.2.0, pinned, keeps the RtMidi objects in `_input` and `_output`).
  if (thru) {
    const raw = (input as unknown as { _input: NodeJS.EventEmitter })._input;
    const out = (thru as unknown as { _output: { sendMessage(bytes: number[]): void } })._output;
    raw.prependListener('message', (_delta: number, bytes: number[]) => out.sendMessage(bytes));
  }
  const detail = `${options.input === null ? `virtual input port "${VIRTUAL_PORT}"` : `input "${options.input}"`}${thru ? `, thru to "${options.thru}"` : ''}`;
  return {
    source: input as unknown as MidiSource,
    status: { available: true, detail },
    close: () => {
      input.close();
      thru?.close();
    },
  };
}
