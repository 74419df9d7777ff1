/**
 * The live daemon, wired: input adapters → note stream → scorer (worker
 * thread) → verdicts → sinks (WebSocket events, session log, OSC out).
 *
 * The session's bookkeeping — clock, sequence numbers, held notes, the
 * standing warning — is core's pure reducer (core/session-state.ts); this
 * shell feeds it input and verdicts and carries out its effects on the
 * sockets, the scorer and the log. Every write to the log is its own
 * transaction, made as it happens, so a killed daemon loses only notes
 * still held.
 *
 * @example
 *   const d = await startDaemon({ corpus: 'presets/demo/corpus', preset: loadPreset('jam'), oscPort: 0, httpPort: 0, ... });
 *   d.status.http.url   // → 'http://127.0.0.1:40123/'
 *   d.handle({ kind: 'note', pitch: 60, velocity: 90, duration: 1, beat: 0, channel: 1 }, Date.now());
 *   await d.stop();
 */
import { join } from 'node:path';
import { beatAt } from '../../core/clock.js';
import { type SessionEffect, type SessionEvent, initialSession, stepSession } from '../../core/session-state.js';
import type { ClearEvent, DaemonEvent, HelloEvent, ScoreEvent, ScoreStretch, WarningEvent } from '../../contract/events.js';
import type { StretchRule } from '../../core/stretch.js';
import { EARLY_FALLBACK, type LivePreset } from '../formats/presets.js';
import { SessionLog, SessionLogError } from '../formats/session-log.js';
import { UsageError } from '../formats/user-error.js';
import { badInputLog } from './bad-input.js';
import type { BadInput, InputCommand } from './input.js';
import type { LiveVerdict } from './live-scorer.js';
import { type MidiSource, attachMidi } from './midi-adapter.js';
import { type MidiStatus, openMidi } from './midi-input.js';
import { type OscInput, openOscInput } from './osc-input.js';
import { type OscOutput, type OscTarget, openOscOutput } from './osc-output.js';
import { packageRoot, packageVersion } from '../formats/package-root.js';
import { type CorpusSummary, type Scorer, type VerdictPass, startScorer } from './scorer.js';
import { startCheckpoints } from './log-checkpoints.js';
import { watchIndexFile } from './index-watch.js';
import { reportService } from './reports.js';
import { DEFAULT_REPORT_LIMIT, reportRoute } from './report-route.js';
import { type WebServer, startWebServer } from './web-server.js';

export interface DaemonOptions {
  corpus: string;
  /** Its threshold resolved (presets.ts resolveThreshold). */
  preset: LivePreset;
  oscPort: number;
  httpPort: number;
  /** Address of the web side; default 127.0.0.1 (access.ts: another needs `token`). */
  host?: string;
  /** Asked of every web request when given. */
  token?: string | null;
  /** Largest `POST /report` body in bytes (default DEFAULT_REPORT_LIMIT); 0 turns /report off. */
  reportLimit?: number;
  oscOut: OscTarget | null;
  midi: { input: string | null; thru: string | null; channels: ReadonlySet<number> | null };
  /** Hear channel 10 (General MIDI percussion) as pitches; left out when absent, as in corpus files. */
  percussion?: boolean;
  log: string;
  /** An in-process port in place of easymidi's (tests). */
  midiSource?: MidiSource;
  /** The scoring worker's code; defaults to the built one beside scorer.js. The log's checkpoint thread (checkpoint-thread.js) is taken from the same folder. */
  workerUrl?: URL;
  /** The overlay's files; defaults to ui/dist in the package. */
  uiDir?: string;
  /** Where one-line notices go (bad input, a crashed worker, a corpus file skipped); the CLI prints them. Default: dropped. */
  notice?: (line: string) => void;
}

export interface DaemonStatus {
  corpus: CorpusSummary;
  /** Null when OSC is not listening (preset input "midi", with MIDI open). */
  osc: { port: number } | null;
  http: { port: number; url: string };
  midi: MidiStatus;
  log: { file: string; session: number };
}

export interface Daemon {
  status: DaemonStatus;
  handle(command: InputCommand, atMs: number): void;
  health(): Record<string, unknown>;
  /** Called with every event pushed on /events, in order. */
  onEvent(listener: (e: DaemonEvent) => void): void;
  stop(): Promise<void>;
}

/** General MIDI's percussion channel: drum sounds, not pitches. */
export const PERCUSSION_CHANNEL = 10;
const isPercussion = (c: InputCommand): boolean => (c.kind === 'note' || c.kind === 'on' || c.kind === 'off') && c.channel === PERCUSSION_CHANNEL;

/** Score, warning and clear events a (re)connecting page gets in its hello. */
export const HISTORY_EVENTS = 240;

/** The preset's recent-stretch rule (core/stretch.ts), or undefined when it judges the whole window only; a stretch is never held to less distinctiveness than the whole window. */
export function earlyRule(preset: LivePreset): StretchRule | undefined {
  const lengths = preset.earlyBeats ?? [];
  if (lengths.length === 0) return undefined;
  return { lengths, thresholds: preset.earlyThresholds ?? lengths.map(() => EARLY_FALLBACK), leftOut: preset.earlyLeftOut, minOnsets: preset.earlyMinOnsets, minDistinctiveness: Math.max(preset.earlyMinDistinctiveness ?? 0, preset.minDistinctiveness) };
}

/** The score event's stretch: where it lies, how it scored, and its own match. */
function stretchOf(v: LiveVerdict): ScoreStretch | null {
  const s = v.stretch;
  if (!s) return null;
  const { match: m, ...where } = s;
  return { ...where, piece: m.piece, title: m.title, pieceStart: m.pieceStart, transposition: m.transposition, matched: m.matched, distinctiveness: m.distinctiveness ?? null };
}

export async function startDaemon(options: DaemonOptions): Promise<Daemon> {
  const preset = options.preset;
  const notice = options.notice ?? (() => {});
  const startedAt = Date.now();
  const cleanup: (() => unknown)[] = [];
  const undo = async (): Promise<void> => {
    for (const c of cleanup.reverse()) await c();
  };

  let log: SessionLog;
  try {
    log = SessionLog.open(options.log, { checkpointsElsewhere: true });
  } catch (e) {
    throw e instanceof SessionLogError ? new UsageError(`--log ${e.message}`) : e;
  }
  cleanup.push(() => log.close());
  // Copying the log's write-ahead file back into it waits for the disk: never on this thread, which sends the scores.
  const checkpoints = startCheckpoints(options.log, {
    threadUrl: options.workerUrl && new URL('./checkpoint-thread.js', options.workerUrl),
    onFailure: (message) => notice(`earwitness: cannot tidy the session log ${options.log} (${message}); notes are still written to it`),
  });
  cleanup.push(() => checkpoints.close());

  const listeners: ((e: DaemonEvent) => void)[] = [];
  const history: (ScoreEvent | WarningEvent | ClearEvent)[] = [];
  const bad = badInputLog(notice);
  let logFailures = 0;
  const logged = (write: () => void): void => {
    try {
      write();
    } catch (e) {
      // A full disk must not stop the performance: say so once, count the rest.
      if (logFailures++ === 0) notice(`earwitness: cannot write the session log ${options.log} (${(e as Error).message}); carrying on, failures are counted in /health`);
    }
  };

  let state = initialSession(preset.bpm, Date.now());
  /** The session's time signature: the preset's until /ew/meter says otherwise. */
  let meter = preset.meter;
  let session = 0;
  /** The session log's row of the standing warning, to mark it cleared. */
  let standingRow = -1;
  let web: WebServer | null = null;
  let oscOut: OscOutput | null = null;

  const push = (e: DaemonEvent): void => {
    if (e.type === 'score' || e.type === 'warning' || e.type === 'clear') {
      // A page draws the newest score's excerpt only: older scores keep theirs out of the history (and out of the heap).
      if (e.type === 'score') {
        let last = history.length - 1;
        while (last >= 0 && history[last].type !== 'score') last--;
        if (last >= 0) history[last] = { ...(history[last] as ScoreEvent), excerpt: null };
      }
      history.push(e);
      if (history.length > HISTORY_EVENTS) history.shift();
    }
    web?.broadcast(e);
    for (const l of listeners) l(e);
  };

  /** Carries out one of the reducer's effects. */
  const carryOut = (e: SessionEffect): void => {
    switch (e.type) {
      case 'score':
        return scorer.submit(e.note);
      case 'whole':
        logged(() => log.addNote(session, { ...e.note, morph: e.note.pitch, receivedAt: e.receivedAt }));
        return push({ type: 'note', ...e.note });
      case 'reset-scorer':
        return scorer.reset();
      case 'raise': {
        const w = e.warning;
        let row = -1;
        logged(() => {
          row = log.addWarning(session, { seq: w.seq, raisedAt: w.time, piece: w.piece, title: w.title, score: w.score, transposition: w.transposition, pieceStart: w.pieceStart, startBeat: w.startBeat, stretch: w.stretch });
        });
        standingRow = row;
        push({ type: 'warning', ...w });
        oscOut?.warning(w.piece, w.score, w.transposition);
        return;
      }
      case 'meter':
        meter = `${e.numerator}/${e.denominator}`;
        return logged(() => log.setMeter(session, meter));
      case 'clear': {
        const row = standingRow;
        logged(() => log.clearWarning(row, e.time));
        return push({ type: 'clear', seq: e.seq, time: e.time, piece: e.warning.piece });
      }
    }
  };
  const dispatch = (event: SessionEvent): void => {
    const step = stepSession(state, event, preset);
    state = step.state;
    for (const e of step.effects) carryOut(e);
  };

  const onVerdict = (v: LiveVerdict, { current, scoringMs }: VerdictPass): void => {
    const time = Date.now();
    const m = v.match;
    push({
      type: 'score', seq: v.seq, time, score: v.score,
      piece: m?.piece ?? null, title: m?.title ?? null, pieceStart: m?.pieceStart ?? null, pieceBar: m?.pieceBar ?? null, pieceBeatInBar: m?.pieceBeatInBar ?? null, transposition: m?.transposition ?? null,
      timeShift: v.timeShift, timeScale: m?.timeScale ?? null, matched: m?.matched ?? 0, windowNotes: v.windowNotes, windowStart: v.windowStart, windowEnd: v.windowEnd, excerpt: v.excerpt, distinctiveness: m?.distinctiveness ?? null,
      stretch: stretchOf(v), scoringMs,
    });
    logged(() => log.addScore(session, { seq: v.seq, time, score: v.score, windowStart: v.windowStart, windowNotes: v.windowNotes, piece: m?.piece ?? null, transposition: m?.transposition ?? null, pieceStart: m?.pieceStart ?? null, matched: m?.matched ?? 0 }));
    oscOut?.score(v.score);
    if (current) dispatch({ type: 'verdict', verdict: v, time });
  };

  let scorer: Scorer;
  let corpus: CorpusSummary;
  try {
    ({ scorer, corpus } = await startScorer({ corpus: options.corpus, windowBeats: preset.window, grid: preset.grid, tolerance: preset.tolerance, tempoFree: preset.tempoFree, early: earlyRule(preset) }, onVerdict, {
      workerUrl: options.workerUrl,
      onCrash: (message) => notice(`earwitness: the scoring worker failed (${message}); started a fresh one, the window starts empty`),
      onNotice: (line) => notice(`earwitness: ${line}`),
    }));
  } catch (e) {
    await undo();
    throw e;
  }
  cleanup.push(() => scorer.close());
  const indexWatch = watchIndexFile(corpus, notice);
  cleanup.push(() => indexWatch.close());

  const reportLimit = options.reportLimit ?? DEFAULT_REPORT_LIMIT;
  const reports = reportService({ corpus: options.corpus, loaded: corpus, stale: () => (indexWatch.onDisk() === 'as loaded' ? null : `was ${indexWatch.onDisk()}`) });
  cleanup.push(() => reports.close());

  const handle = (command: InputCommand, atMs: number): void => {
    if (isPercussion(command) && !options.percussion) return;
    dispatch({ type: 'input', command, atMs, now: Date.now() });
  };

  let midi: MidiStatus = { available: false, detail: 'not opened: the preset listens to OSC only' };
  let osc: OscInput | null = null;
  try {
    if (preset.input !== 'osc') {
      const opened = options.midiSource
        ? { source: options.midiSource, status: { available: true, detail: 'in-process port' }, close: () => {} }
        : await openMidi({ input: options.midi.input, thru: options.midi.thru });
      midi = opened.status;
      cleanup.push(() => opened.close());
      if (opened.source) {
        const detach = attachMidi(opened.source, { channels: options.midi.channels }, handle);
        cleanup.push(detach);
      }
    }
    if (preset.input !== 'midi' || !midi.available) {
      osc = await openOscInput({ port: options.oscPort, onCommand: handle, onBad: (b: BadInput) => bad.record('OSC', b) });
      const opened = osc;
      cleanup.push(() => opened.close());
    }
    if (options.oscOut) {
      oscOut = await openOscOutput(options.oscOut);
      const opened = oscOut;
      cleanup.push(() => opened.close());
    }
  } catch (e) {
    await undo();
    throw e;
  }

  const hello = (): HelloEvent => {
    const recent = [...history];
    const standing = state.standing;
    // A warning older than the history still stands: it goes first.
    if (standing && !recent.some((e) => e.type === 'warning' && e.seq === standing.seq && e.time === standing.time)) recent.unshift({ type: 'warning', ...standing });
    return {
      type: 'hello',
      version: packageVersion(),
      corpus,
      preset: { name: preset.name, window: preset.window, threshold: preset.threshold, minNotes: preset.minNotes, consecutive: preset.consecutive, warn: preset.warn, pitch: 'chromatic', tolerance: preset.tolerance, tempoFree: preset.tempoFree, minDistinctiveness: preset.minDistinctiveness, ...(earlyRule(preset) ? { early: earlyRule(preset) } : {}) },
      midi,
      osc: { port: osc?.port ?? 0 },
      history: recent,
    };
  };

  const health = (): Record<string, unknown> => ({
    ok: true,
    uptimeSeconds: Math.round((Date.now() - startedAt) / 100) / 10,
    session,
    notes: state.seq,
    held: state.held.size,
    evaluations: scorer.counters.evaluations,
    coalesced: scorer.counters.coalesced,
    dropped: scorer.counters.dropped,
    windowRestarts: scorer.counters.restarts,
    lastEvaluationMs: scorer.counters.lastEvaluationMs,
    warmUp: scorer.counters.warmUp,
    readAhead: scorer.counters.readAhead,
    warnings: state.warnings,
    standing: state.standing?.piece ?? null,
    badInput: { ...bad.counts },
    logFailures,
    scheduled: osc?.scheduled() ?? 0,
    clients: web?.clients() ?? 0,
    slowClients: web?.slowClients() ?? 0,
    reportsWaiting: reports.waiting(),
    oscOutFailures: oscOut?.failures() ?? 0,
    meter,
    clock: { source: state.clock.source, running: state.clock.running, beat: beatAt(state.clock, Date.now()), bpm: state.clock.bpm },
    corpus,
    corpusIndex: indexWatch.file === null ? null : { file: indexWatch.file, onDisk: indexWatch.onDisk() },
    preset: preset.name,
    midi,
    osc: { port: osc?.port ?? 0 },
  });

  try {
    web = await startWebServer({ port: options.httpPort, host: options.host, token: options.token, uiDir: options.uiDir ?? join(packageRoot(), 'ui', 'dist'), hello, health,
      ...(reportLimit > 0 ? { report: reportRoute({ reports, limit: reportLimit }) } : {}) });
  } catch (e) {
    await undo();
    throw e;
  }
  const server = web;
  cleanup.push(() => server.close());

  session = log.startSession({ corpus: corpus.source, preset: preset.name, settings: { ...preset, liveScores: true, osc: osc?.port ?? null, http: server.port, midi: midi.detail } });

  let stopping: Promise<void> | null = null;
  return {
    status: { corpus, osc: osc ? { port: osc.port } : null, http: { port: server.port, url: server.url }, midi, log: { file: options.log, session } },
    handle,
    health,
    onEvent: (l) => void listeners.push(l),
    stop() {
      // The log first, and synchronously: whatever happens to the sockets after, the session is whole on disk.
      stopping ??= (async () => {
        dispatch({ type: 'end', atMs: Date.now() });
        logged(() => log.endSession(session));
        await undo();
      })();
      return stopping;
    },
  };
}
