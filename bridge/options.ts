/** Options several commands share, so each means the same everywhere. */
import { Option } from 'commander';
import { PITCH_MODES } from '../core/note.js';
import { DEFAULT_WINDOW } from '../core/windows.js';
import { positive } from './usage.js';

export const pitchOption = () => new Option('--pitch <mode>', 'pitch dimension to match in').choices(PITCH_MODES as string[]).default('chromatic');
export const windowOption = () => new Option('--window <beats>', 'window length in beats').argParser(positive('--window')).default(DEFAULT_WINDOW.window);
export const hopOption = () => new Option('--hop <beats>', 'hop between window starts in beats').argParser(positive('--hop')).default(DEFAULT_WINDOW.hop);
export const printJson = (value: unknown): void => void process.stdout.write(JSON.stringify(value, null, 2) + '\n');
