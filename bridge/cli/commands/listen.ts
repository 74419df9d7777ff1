/**
 * `earwitness listen`: the live daemon; `earwitness ports`: the MIDI ports
 * it could open.
 *
 * @example
 *   earwitness listen --corpus presets/demo/corpus --preset jam
 *   earwitness listen --corpus ./training-set --preset livecode --threshold 0.8 --osc-out 127.0.0.1:9752
 *   earwitness listen --corpus presets/demo/corpus --host 0.0.0.0 --token stage-left-0427   # the overlay on a tablet
 *   earwitness ports
 */
import type { Command } from 'commander';
import { CAUTION } from '../../../core/report.js';
import { gridWords } from '../../../core/words.js';
import { startDaemon } from '../../daemon/daemon.js';
import { DEFAULT_HOST, checkExposure, isWildcard } from '../../daemon/access.js';
import { listPorts } from '../../daemon/midi-input.js';
import { parseOscTarget } from '../../daemon/osc-output.js';
import { defaultLogFile } from '../../formats/paths.js';
import { printNotice } from '../notices.js';
import { EARLY_FALLBACK, INPUTS, type Overrides, loadPreset, resolveThreshold, withOverrides } from '../../formats/presets.js';
import { printJson } from '../options.js';
import { UsageError, parseNumber, wholeNumber } from '../../formats/user-error.js';
import { DEFAULT_REPORT_LIMIT } from '../../daemon/report-route.js';

export const DEFAULT_OSC_PORT = 9750;
export const DEFAULT_HTTP_PORT = 9751;
/** Longest a stop may take before the process exits regardless (the log is closed first). */
const STOP_LIMIT_MS = 1500;

export const portNumber = (flag: string) => (v: string) => parseNumber(flag, v, (n) => Number.isInteger(n) && n >= 0 && n <= 65535, 'a port number from 0 (any free port) to 65535');

/** On SIGINT or SIGTERM: say `saying` on stderr, run `stop`, exit 0; after STOP_LIMIT_MS, exit regardless. */
export function stopOnSignals(saying: string, stop: () => Promise<void>): void {
  const onSignal = (signal: string): void => {
    process.stderr.write(`earwitness: ${signal}: ${saying}\n`);
    setTimeout(() => process.exit(0), STOP_LIMIT_MS).unref();
    stop().then(
      () => process.exit(0),
      (e: Error) => {
        process.stderr.write(`earwitness: while stopping: ${e.message}\n`);
        process.exit(0);
      },
    );
  };
  process.once('SIGINT', () => onSignal('SIGINT'));
  process.once('SIGTERM', () => onSignal('SIGTERM'));
}

function channelList(v: string): Set<number> {
  const parts = v.split(',').map((s) => s.trim());
  const channels = parts.map(Number);
  const wrong = parts.find((s, i) => s === '' || !(Number.isInteger(channels[i]) && channels[i] >= 1 && channels[i] <= 16));
  if (wrong !== undefined) throw new UsageError(`--channels ${v}: "${wrong}" is not a MIDI channel; give channels 1–16 separated by commas, as in 1,2`);
  return new Set(channels);
}

interface ListenFlags extends Overrides {
  corpus: string;
  percussion?: boolean;
  preset: string;
  oscPort: number;
  httpPort: number;
  host: string;
  token?: string;
  reportLimit: number;
  oscOut?: string;
  midiIn?: string;
  thru?: string;
  channels?: Set<number>;
  log?: string;
}

export function registerListen(cli: Command): void {
  cli
    .command('listen')
    .description('the live daemon: hears MIDI and OSC, scores the last few beats against the corpus, warns on the overlay')
    .requiredOption('--corpus <path>', 'corpus folder')
    .option('--preset <name|file>', 'jam, livecode, record, or a preset JSON file', 'jam')
    .option('--input <which>', `note sources: ${INPUTS.join(', ')} (overrides the preset)`)
    .option('--window <beats>', 'window length in beats (overrides the preset)')
    .option('--bpm <n>', 'tempo of the daemon clock until MIDI clock or /ew/tempo says otherwise (overrides the preset)')
    .option('--threshold <score>', 'score from 0 to 1 at which a window is hot, or "auto": the p99 of the baseline stored by corpus build --baseline (overrides the preset)')
    .option('--min-notes <n>', 'fewest notes in a window for it to warn (overrides the preset)')
    .option('--consecutive <n>', 'scoring passes in a row that raise, or clear, a warning (overrides the preset)')
    .option('--hysteresis <score>', 'a warning clears only below threshold minus this (overrides the preset)')
    .option('--grid <value>', 'onsets snap to this note value before scoring: 1/16, 1/16T, 1/32, …, or a number of divisions of a beat; 0 = as played (overrides the preset)')
    .option('--meter <n/d>', 'the session\'s time signature, for its bars and beats, as in 6/8 (overrides the preset; 4/4 by default)')
    .option('--percussion', 'hear channel 10 (General MIDI percussion) as pitches; left out by default, as in corpus files')
    .option('--tolerance <beats>', 'beats a played onset may stray from the corpus\'s and still match, 0 = exact (overrides the preset)')
    .option('--tempo-free', 'also find passages played at 0.5–2 times the corpus tempo (overrides the preset)')
    .option('--no-tempo-free', 'match at the corpus tempo only (overrides the preset)')
    .option('--min-distinctiveness <d>', 'matches less distinctive than this (0–1) never warn (overrides the preset)')
    .option('--early-beats <beats,...>', 'lengths of the recent stretches that may warn on their own, as in 3,4,6; "" = the whole window only (overrides the preset)')
    .option('--early-threshold <score,...>', 'score a recent stretch must reach: one number, one per length, or "auto" from the baseline corpus build --baseline stores (overrides the preset)')
    .option('--early-left-out <share>', 'a recent stretch every note of which matches warns below its threshold too when it leaves out under this share (0–1) of the corpus passage\'s notes; 0 = never (overrides the preset)')
    .option('--early-min-onsets <n>', 'fewest different moments the notes of a recent stretch must start at for it to warn; a chord counts once (overrides the preset)')
    .option('--early-min-distinctiveness <d>', 'recent stretches less distinctive than this (0–1) never warn (overrides the preset)')
    .option('--warn', 'raise warnings (overrides the preset)')
    .option('--no-warn', 'log and score only, no warnings (overrides the preset)')
    .option('--osc-port <port>', 'UDP port for OSC in, on 127.0.0.1 (0 = any free port)', portNumber('--osc-port'), DEFAULT_OSC_PORT)
    .option('--http-port <port>', 'port of the overlay, /health and /events, on --host (0 = any free port)', portNumber('--http-port'), DEFAULT_HTTP_PORT)
    .option('--host <addr>', 'address of the overlay, /health and /events: 127.0.0.1 is this machine only; any other (0.0.0.0 = all) needs --token. OSC in stays on 127.0.0.1', DEFAULT_HOST)
    .option('--token <secret>', 'a secret every request to the overlay, /health, /events and /report must then carry (?token=SECRET, or Authorization: Bearer SECRET)')
    .option('--report-limit <bytes>', `largest body POST /report accepts, in bytes (0 turns /report off); default ${DEFAULT_REPORT_LIMIT} (16 MiB, the largest MIDI file report reads)`, wholeNumber('--report-limit'), DEFAULT_REPORT_LIMIT)
    .option('--osc-out <host:port>', 'also send /ew/warning and /ew/score there')
    .option('--midi-in <name>', 'MIDI input port to open (default: a virtual port "earwitness in"; see earwitness ports)')
    .option('--thru <name>', 'forward MIDI input to this output port')
    .option('--channels <list>', 'MIDI channels to hear, 1–16, as in 1,2 (default: all)', channelList)
    .option('--log <file>', `session log (default: ${defaultLogFile()})`)
    .action(async (o: ListenFlags) => {
      checkExposure(o.host, o.token ?? null);
      const chosen = withOverrides(loadPreset(o.preset), {
        input: o.input, window: o.window, bpm: o.bpm, threshold: o.threshold, minNotes: o.minNotes,
        consecutive: o.consecutive, hysteresis: o.hysteresis, grid: o.grid, warn: o.warn, meter: o.meter,
        tolerance: o.tolerance, tempoFree: o.tempoFree, minDistinctiveness: o.minDistinctiveness,
        earlyBeats: o.earlyBeats, earlyThreshold: o.earlyThreshold, earlyLeftOut: o.earlyLeftOut, earlyMinOnsets: o.earlyMinOnsets, earlyMinDistinctiveness: o.earlyMinDistinctiveness,
      });
      const preset = resolveThreshold(chosen, o.corpus);
      if (preset.earlyUncalibrated?.length) {
        printNotice(`earwitness: no human baseline of ${preset.earlyUncalibrated.join(', ')}-beat windows is stored, so recent stretches of those lengths warn at ${EARLY_FALLBACK}; "earwitness corpus build DIR --baseline" stores them`);
      }
      const log = o.log ?? defaultLogFile();
      const daemon = await startDaemon({
        corpus: o.corpus,
        preset,
        oscPort: o.oscPort,
        httpPort: o.httpPort,
        host: o.host,
        token: o.token ?? null,
        reportLimit: o.reportLimit,
        oscOut: o.oscOut === undefined ? null : parseOscTarget(o.oscOut),
        midi: { input: o.midiIn ?? null, thru: o.thru ?? null, channels: o.channels ?? null },
        percussion: o.percussion ?? false,
        log,
        notice: printNotice,
      });
      const s = daemon.status;
      const midiLine = s.midi.available
        ? `MIDI: ${s.midi.detail}${o.channels ? `, channels ${[...o.channels].join(',')}` : ''}`
        : preset.input === 'osc'
          ? 'MIDI: not opened (the preset listens to OSC only)'
          : `MIDI unavailable: ${s.midi.detail} — carrying on with OSC only`;
      const lines = [
        `earwitness listen — ${CAUTION}`,
        `corpus: ${s.corpus.source} (${s.corpus.pieces} pieces, ${s.corpus.notes} notes)`,
        `preset: ${preset.name} — ${preset.description} (window ${preset.window} beats, threshold ${preset.threshold}${chosen.threshold === 'auto' ? ' (auto: the corpus baseline\'s p99)' : ''}, grid ${gridWords(preset.grid)}, ${preset.meter}, tolerance ${preset.tolerance} beat${preset.tempoFree ? ', tempo-free' : ''}, min distinctiveness ${preset.minDistinctiveness}, ${preset.minNotes} notes, ${preset.consecutive} in a row, hysteresis ${preset.hysteresis}, ${preset.warn ? 'warnings on' : 'no warnings'})`,
        midiLine,
        o.percussion ? 'channel 10 (percussion): heard as pitches (--percussion)' : 'channel 10 (percussion): left out, as in corpus files; --percussion hears it',
        s.osc ? `OSC: udp 127.0.0.1:${s.osc.port} (/ew/note, /ew/on, /ew/off, /ew/tempo, /ew/beat, /ew/reset, /ew/meter)` : 'OSC: not listening (the preset listens to MIDI only)',
        `overlay: ${s.http.url}${o.token ? `?token=${o.token}` : ''}${isWildcard(o.host) ? ' (and on every other address of this machine)' : ''}`,
        o.reportLimit > 0 ? `reports: POST MIDI files to ${s.http.url}report (bodies up to ${o.reportLimit} bytes)` : 'reports: off (--report-limit 0)',
        `log: ${s.log.file} (session ${s.log.session})`,
        `listening osc=${s.osc?.port ?? 0} http=${s.http.port}`,
        'Ctrl-C stops.',
      ];
      // A closed terminal or pipe must not end the session: what cannot be printed is dropped, the daemon carries on.
      process.stdout.on('error', () => {});
      process.stderr.on('error', () => {});
      // Before the listening line: whoever waits for it may signal at once, and an unhandled SIGINT would skip closing the session.
      stopOnSignals(`stopping; session ${s.log.session} is saved in ${s.log.file}`, () => daemon.stop());
      process.stdout.write(lines.join('\n') + '\n');
    });

  cli
    .command('ports')
    .description('list the MIDI input and output ports earwitness listen can open')
    .option('--json', 'print JSON')
    .action(async (o: { json?: boolean }) => {
      const ports = await listPorts();
      if (o.json) return printJson(ports);
      if ('unavailable' in ports) return void process.stdout.write(`MIDI unavailable: ${ports.unavailable}\n`);
      const list = (names: string[]): string => (names.length ? names.map((n) => `  ${n}`).join('\n') : '  (none)');
      process.stdout.write(`MIDI inputs (for --midi-in):\n${list(ports.inputs)}\nMIDI outputs (for --thru):\n${list(ports.outputs)}\n`);
    });
}
