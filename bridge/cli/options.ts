/** Options several commands share, so each means the same everywhere. */
import { Option } from 'commander';
import { PITCH_CHOICES, PITCH_HELP, parsePitch } from '../../core/words.js';
import { DEFAULT_WINDOW } from '../../core/windows.js';
import { DEFAULT_MIN_NOTES } from '../../core/report.js';
import { parseNumber, positive } from './usage.js';
import { UsageError } from '../formats/user-error.js';

/** `--pitch`: chromatic (semitones), or diatonic (scale steps; `morphetic`, the published method's term, means the same). */
export const pitchOption = () =>
  new Option('--pitch <mode>', PITCH_HELP)
    .choices(PITCH_CHOICES as unknown as string[])
    .argParser((v: string) => {
      const mode = parsePitch(v);
      if (mode === null) throw new UsageError(`--pitch ${v}: allowed: ${PITCH_CHOICES.join(', ')}`);
      return mode;
    })
    .default('chromatic');
export const windowOption = () => new Option('--window <beats>', 'window length in beats').argParser(positive('--window')).default(DEFAULT_WINDOW.window);
export const hopOption = () => new Option('--hop <beats>', 'hop between window starts in beats').argParser(positive('--hop')).default(DEFAULT_WINDOW.hop);
export const toleranceOption = () =>
  new Option('--tolerance <beats>', "beats an onset may stray from the corpus's and still match (0 = exact)")
    .argParser((v: string) => parseNumber('--tolerance', v, (n) => n >= 0 && n < 1, 'a number of beats from 0 up to (not including) 1'))
    .default(0);
export const tempoFreeOption = () => new Option('--tempo-free', 'also find passages played at 0.5–2 times the corpus tempo (each match reports timeScale)');
export const minNotesOption = () =>
  new Option('--min-notes <n>', 'windows with fewer notes are listed as too short and left out of originality, its interval and the gate')
    .argParser((v: string) => parseNumber('--min-notes', v, (n) => Number.isInteger(n) && n >= 1, 'a whole number of at least 1'))
    .default(DEFAULT_MIN_NOTES);
export const printJson = (value: unknown): void => void process.stdout.write(JSON.stringify(value, null, 2) + '\n');
