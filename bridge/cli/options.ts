/** Options several commands share, so each means the same everywhere. */
import { Option } from 'commander';
import { PITCH_CHOICES, PITCH_HELP } from '../../core/words.js';
import { REPORT_DEFAULTS, SETTING_RULES } from '../corpus/report-settings.js';

/** `--pitch`: chromatic (semitones), or diatonic (scale steps; `morphetic`, the published method's term, means the same). */
export const pitchOption = () =>
  new Option('--pitch <mode>', PITCH_HELP)
    .choices(PITCH_CHOICES as unknown as string[])
    .argParser((v: string) => SETTING_RULES.pitch('--pitch', v))
    .default(REPORT_DEFAULTS.pitch);
export const windowOption = () => new Option('--window <beats>', 'window length in beats').argParser((v: string) => SETTING_RULES.window('--window', v)).default(REPORT_DEFAULTS.window);
export const hopOption = () => new Option('--hop <beats>', 'hop between window starts in beats').argParser((v: string) => SETTING_RULES.hop('--hop', v)).default(REPORT_DEFAULTS.hop);
export const toleranceOption = () =>
  new Option('--tolerance <beats>', "beats an onset may stray from the corpus's and still match (0 = exact)")
    .argParser((v: string) => SETTING_RULES.tolerance('--tolerance', v))
    .default(REPORT_DEFAULTS.tolerance);
export const tempoFreeOption = () => new Option('--tempo-free', 'also find passages played at 0.5–2 times the corpus tempo (each match reports timeScale)');
export const minNotesOption = () =>
  new Option('--min-notes <n>', 'windows with fewer notes are listed as too short and left out of originality, its interval and the gate')
    .argParser((v: string) => SETTING_RULES.minNotes('--min-notes', v))
    .default(REPORT_DEFAULTS.minNotes);
export const printJson = (value: unknown): void => void process.stdout.write(JSON.stringify(value, null, 2) + '\n');
