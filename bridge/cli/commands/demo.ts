/**
 * `earwitness demo`: the live daemon on the bundled demo corpus, played by a
 * built-in generator, so the overlay shows real warnings with no MIDI
 * hardware and no sequencer. The generator is a variable-order Markov chain
 * (core/markov.ts) trained on the melodies of the demo tunes; it streams
 * `/ew/note` over OSC to the daemon, at the preset's tempo, exactly as a
 * live-coding environment would. Long contexts make it copy whole phrases
 * of a tune (the daemon warns), and where a phrase ends it jumps elsewhere
 * and mixes tunes (the warning clears).
 *
 * It runs the livecode preset with one change, its whole-window threshold
 * at DEMO_THRESHOLD: the generator plays the tunes' melodies alone, and the
 * corpus holds melody and accompaniment, so a phrase copied note for note
 * scores its melody's share of the passage's notes, about 0.7–0.8. How often
 * it warns, and how often a warning names the tune being copied:
 * test/bench/RESULTS.md, "The demo".
 *
 * @example
 *   earwitness demo                       # overlay at http://127.0.0.1:9751/
 *   earwitness demo --seed 7 --order 3    # another performance, wandering more
 */
import { join } from 'node:path';
import type { Command } from 'commander';
import { placedWords, transpositionWords } from '../../../core/words.js';
import { generator, trainChain } from '../../../core/markov.js';
import { CAUTION } from '../../../core/report.js';
import { seededRandom } from '../../../core/stats.js';
import { startDaemon } from '../../daemon/daemon.js';
import { packageRoot } from '../../formats/package-root.js';
import { startOscPlayer } from '../../demo/osc-player.js';
import { demoTunes } from '../../demo/tunes.js';
import type { WarningEvent } from '../../../contract/events.js';
import { defaultLogFile } from '../../formats/paths.js';
import { parseNumber, wholeNumber } from '../../formats/user-error.js';
import { printNotice } from '../notices.js';
import { type LivePreset, loadPreset, resolveThreshold, withOverrides } from '../../formats/presets.js';
import { DEFAULT_HTTP_PORT, DEFAULT_OSC_PORT, portNumber, stopOnSignals } from './listen.js';

/** Longest context the chain follows by default: long enough to quote whole phrases (see above). */
export const DEMO_ORDER = 6;
/** Longest context allowed: past a tune's length a longer one changes nothing. */
export const MAX_ORDER = 64;
/** The preset the demo runs: the generator speaks OSC, as a live-coding environment does. */
export const DEMO_PRESET = 'livecode';
/** The demo's whole-window threshold: a melody copied alone from a tune with accompaniment scores about 0.7–0.8 (see above). */
export const DEMO_THRESHOLD = 0.7;

/** The preset the demo runs on `corpus`: DEMO_PRESET with its threshold at DEMO_THRESHOLD. */
export const demoPreset = (corpus: string): LivePreset => resolveThreshold(withOverrides(loadPreset(DEMO_PRESET), { threshold: String(DEMO_THRESHOLD) }), corpus);

interface DemoFlags {
  httpPort: number;
  oscPort: number;
  seed: number;
  order: number;
  log?: string;
}

const order = (v: string): number => parseNumber('--order', v, (n) => Number.isInteger(n) && n >= 0 && n <= MAX_ORDER, `a whole number from 0 to ${MAX_ORDER}`);

export function registerDemo(cli: Command): void {
  cli
    .command('demo')
    .description('the daemon on the bundled demo corpus, played by a built-in generator over OSC: real warnings on the overlay, no MIDI needed')
    .option('--http-port <port>', 'port of the overlay, /health and /events, on 127.0.0.1 (0 = any free port)', portNumber('--http-port'), DEFAULT_HTTP_PORT)
    .option('--osc-port <port>', 'UDP port the daemon hears OSC on, on 127.0.0.1 (0 = any free port)', portNumber('--osc-port'), DEFAULT_OSC_PORT)
    .option('--seed <n>', 'seed of the generator: each seed is another performance', wholeNumber('--seed'), 1)
    .option('--order <n>', `longest context, in notes, the Markov chain follows (longer quotes longer phrases; 0 picks notes at random)`, order, DEMO_ORDER)
    .option('--log <file>', `session log (default: ${defaultLogFile()})`)
    .action(async (o: DemoFlags) => {
      const corpus = join(packageRoot(), 'presets', 'demo', 'corpus');
      const tunes = demoTunes(corpus);
      const chain = trainChain(tunes.map((t) => t.melody), o.order);
      const preset = demoPreset(corpus);
      const log = o.log ?? defaultLogFile();
      const daemon = await startDaemon({
        corpus,
        preset,
        oscPort: o.oscPort,
        httpPort: o.httpPort,
        oscOut: null,
        midi: { input: null, thru: null, channels: null },
        log,
        notice: printNotice,
      });
      const s = daemon.status;
      const oscPort = s.osc!.port;
      daemon.onEvent((e) => {
        if (e.type !== 'warning') return;
        const w = e as WarningEvent;
        const where = placedWords({ bar: w.pieceBar ?? null, beatInBar: w.pieceBeatInBar ?? null }, w.pieceStart, 'the tune');
        process.stdout.write(`warning: "${w.title}" (${w.piece}), score ${w.score.toFixed(2)}, ${transpositionWords(w.transposition)}, from ${where}${w.pieceStart < 0 ? '' : ' of the tune'}\n`);
      });
      process.stdout.write(
        [
          `earwitness demo — ${CAUTION}`,
          `corpus: ${s.corpus.source} (${s.corpus.pieces} pieces, ${s.corpus.notes} notes), the tune book of an invented fiddle club (presets/demo/README.md)`,
          `preset: ${preset.name} (window ${preset.window} beats, threshold ${preset.threshold}, ${preset.minNotes} notes, ${preset.consecutive} in a row)`,
          `generator: variable-order Markov chain, order ${o.order}, seed ${o.seed}, over the melodies of ${tunes.length} tunes; ${preset.bpm} bpm as /ew/note to udp 127.0.0.1:${oscPort}`,
          `log: ${s.log.file} (session ${s.log.session})`,
          `listening osc=${oscPort} http=${s.http.port}`,
          '',
          `    Open the overlay in your browser:  ${s.http.url}`,
          '',
          'Warnings also print here. Ctrl-C stops.',
        ].join('\n') + '\n',
      );
      const player = await startOscPlayer({ host: '127.0.0.1', port: oscPort, bpm: preset.bpm, next: generator(chain, seededRandom(o.seed)).next });

      // A closed terminal must not stop the demo midway: what cannot be printed is dropped.
      process.stdout.on('error', () => {});
      process.stderr.on('error', () => {});
      stopOnSignals(`stopping the generator and the daemon; session ${s.log.session} is saved in ${s.log.file}`, () => player.stop().then(() => daemon.stop()));
    });
}
