/**
 * The session log: every note, every live score and every warning of a live session, in
 * SQLite (WAL mode), written as it happens so a killed daemon loses at most
 * what was in flight. Opening a log checks it is ours and of a version we
 * read; anything else is a clear error, and the file is left untouched.
 */
import { mkdirSync } from 'node:fs';
import { dirname } from 'node:path';
import Database from 'better-sqlite3';
import { z } from 'zod';
import { GRAINS_PER_BEAT, PITCH_MODES, type PitchMode } from '../../core/note.js';
import type { WarnedMatch } from '../../contract/events.js';
import type { StretchSummary } from '../../core/session-state.js';
import { parseSignature } from '../../core/bars.js';

export const LOG_SCHEMA_VERSION = 1;
const APPLICATION_ID = 0x45574c47; // "EWLG": marks the file as an earwitness log

const SCHEMA = `
CREATE TABLE IF NOT EXISTS sessions (
  id INTEGER PRIMARY KEY,
  started_at TEXT NOT NULL,
  ended_at TEXT,
  corpus TEXT NOT NULL,
  preset TEXT NOT NULL,
  settings TEXT NOT NULL
);
CREATE TABLE IF NOT EXISTS notes (
  session_id INTEGER NOT NULL REFERENCES sessions(id),
  seq INTEGER NOT NULL,
  onset REAL NOT NULL,
  duration REAL NOT NULL,
  pitch INTEGER NOT NULL,
  velocity INTEGER NOT NULL,
  channel INTEGER NOT NULL,
  received_at REAL NOT NULL,
  PRIMARY KEY (session_id, seq)
);
CREATE TABLE IF NOT EXISTS warnings (
  id INTEGER PRIMARY KEY,
  session_id INTEGER NOT NULL REFERENCES sessions(id),
  seq INTEGER NOT NULL,
  raised_at REAL NOT NULL,
  piece TEXT NOT NULL,
  title TEXT NOT NULL,
  score REAL NOT NULL,
  transposition INTEGER NOT NULL,
  piece_start REAL NOT NULL,
  start_beat REAL NOT NULL,
  cleared_at REAL,
  stretch TEXT
);
CREATE TABLE IF NOT EXISTS scores (
  session_id INTEGER NOT NULL REFERENCES sessions(id),
  seq INTEGER NOT NULL,
  time REAL NOT NULL,
  score REAL NOT NULL,
  window_start REAL NOT NULL,
  window_notes INTEGER NOT NULL,
  piece TEXT,
  transposition INTEGER,
  piece_start REAL,
  matched INTEGER NOT NULL
);
`;

/** Added to the warnings table of format 1 since: the recent stretch that raised a warning, as JSON (null for the whole window). A log without it gets it when opened to write. */
const STRETCH_COLUMN = 'stretch';
/** Logs written before live scores were kept lack the scores table; it is added when such a log is next written to. */
const SCORES_TABLE = 'scores';

/**
 * The session's settings as stored (JSON in sessions.settings): the daemon
 * writes its whole preset and more; these are the fields a reader relies on,
 * each optional (an older log may lack one, and review then takes the batch
 * report's default).
 */
export const sessionSettingsSchema = z
  .object({
    window: z.number().positive().describe('a positive number of beats'),
    hop: z.number().positive().describe('a positive number of beats'),
    pitch: z.enum(PITCH_MODES as [PitchMode, ...PitchMode[]]).describe(`one of ${PITCH_MODES.join(', ')}`),
    threshold: z.number().min(0).max(1).describe('a number from 0 to 1'),
    bpm: z.number().positive().describe('a positive tempo'),
    tolerance: z.number().min(0).lt(1).describe('a number of beats from 0 up to, not including, 1'),
    tempoFree: z.boolean().describe('true or false'),
    grid: z.number().int().min(0).refine((g) => g === 0 || GRAINS_PER_BEAT % g === 0).describe(`a whole number of divisions per beat that divides ${GRAINS_PER_BEAT}, or 0`),
    meter: z.string().refine((m) => parseSignature(m) !== null).describe('a time signature such as "4/4" or "6/8"'),
    /** True when the daemon kept every live score in the scores table. */
    liveScores: z.boolean().describe('true or false'),
  })
  .partial();

export interface SessionInfo {
  corpus: string;
  preset: string;
  /** Window, thresholds and the rest, as JSON. */
  settings: z.input<typeof sessionSettingsSchema> & Record<string, unknown>;
}

export interface SessionSummary {
  id: number;
  start: string;
  end: string | null;
  corpus: string;
  preset: string;
  settings: Record<string, unknown>;
  notes: number;
  warnings: number;
}

const midiByte = z.number().int().min(0).max(127).describe('a whole number 0–127');
/** A row of the notes table as a reader takes it (a core Note, its sequence number and arrival time); fields in the order they are checked. */
export const loggedNoteSchema = z.object({
  seq: z.number().int().min(1).describe('a whole number ≥ 1'),
  onset: z.number().min(0).describe('a beat ≥ 0'),
  duration: z.number().min(0).describe('beats ≥ 0'),
  pitch: midiByte,
  morph: midiByte,
  velocity: midiByte,
  channel: z.number().int().min(1).max(16).describe('a whole number 1–16'),
  /** Wall-clock time the note arrived, ms since the epoch. */
  receivedAt: z.number().describe('a time in ms since the epoch'),
});
export type LoggedNote = z.infer<typeof loggedNoteSchema>;

/**
 * One live scoring pass as the log keeps it, compactly: what the performer
 * saw on the meter (seq of the last note it included, the score, the window,
 * and the match: piece, transposition, where in the piece; null when nothing
 * matched). Fields in the order they are checked.
 */
export const loggedScoreSchema = z.object({
  seq: z.number().int().min(0).describe('a whole number ≥ 0'),
  time: z.number().describe('a time in ms since the epoch'),
  score: z.number().min(0).max(1).describe('a score from 0 to 1'),
  windowStart: z.number().min(0).describe('a beat ≥ 0'),
  windowNotes: z.number().int().min(0).describe('a whole number ≥ 0'),
  piece: z.string().nullable().describe('a corpus path, or null'),
  transposition: z.number().int().nullable().describe('a whole number, or null'),
  pieceStart: z.number().nullable().describe('a beat, or null'),
  matched: z.number().int().min(0).describe('a whole number ≥ 0'),
});
export type LoggedScore = z.infer<typeof loggedScoreSchema>;

export interface LoggedWarning extends WarnedMatch {
  id: number;
  /** Sequence number of the last note in the warned window. */
  seq: number;
  raisedAt: number;
  clearedAt: number | null;
}

export type NewWarning = Omit<LoggedWarning, 'id' | 'clearedAt'>;

/** A log file that cannot be used: names the file and what is wrong. */
export class SessionLogError extends Error {
  constructor(readonly file: string, reason: string) {
    super(`${file}: ${reason}`);
    this.name = 'SessionLogError';
  }
}

export class SessionLog {
  private readonly db: Database.Database;
  private readonly insertNote: Database.Statement;
  private readonly insertWarning: Database.Statement;
  private readonly insertScore: Database.Statement | null;

  private constructor(readonly file: string, db: Database.Database) {
    this.db = db;
    this.insertNote = db.prepare(
      'INSERT INTO notes (session_id, seq, onset, duration, pitch, velocity, channel, received_at) VALUES (?, ?, ?, ?, ?, ?, ?, ?)',
    );
    this.insertWarning = db.prepare(
      'INSERT INTO warnings (session_id, seq, raised_at, piece, title, score, transposition, piece_start, start_beat, stretch) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)',
    );
    this.insertScore = this.hasScores()
      ? db.prepare('INSERT INTO scores (session_id, seq, time, score, window_start, window_notes, piece, transposition, piece_start, matched) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)')
      : null;
  }

  /** Whether the log keeps live scores (logs written before they were kept do not). */
  private hasScores(): boolean {
    return (this.db.prepare("SELECT count(*) AS n FROM sqlite_master WHERE type = 'table' AND name = ?").get(SCORES_TABLE) as { n: number }).n > 0;
  }

  /**
   * Opens (creating when absent) a log. `readonly` never creates or changes
   * anything. `checkpointsElsewhere`: this connection's commits never copy the
   * write-ahead log back into the file (a checkpoint, which waits for the
   * disk); the caller runs them another way (bridge/daemon/log-checkpoints.ts).
   */
  static open(file: string, options: { readonly?: boolean; checkpointsElsewhere?: boolean } = {}): SessionLog {
    if (!options.readonly) mkdirSync(dirname(file), { recursive: true });
    let db: Database.Database;
    try {
      db = new Database(file, { readonly: options.readonly ?? false, fileMustExist: options.readonly ?? false });
    } catch (e) {
      throw new SessionLogError(file, options.readonly ? `cannot open the session log (${(e as Error).message})` : `cannot create the session log (${(e as Error).message})`);
    }
    try {
      const appId = db.pragma('application_id', { simple: true }) as number;
      const version = db.pragma('user_version', { simple: true }) as number;
      const empty = (db.prepare("SELECT count(*) AS n FROM sqlite_master").get() as { n: number }).n === 0;
      if (empty && !options.readonly) {
        db.pragma('journal_mode = WAL');
        db.pragma(`application_id = ${APPLICATION_ID}`);
        db.pragma(`user_version = ${LOG_SCHEMA_VERSION}`);
        db.exec(SCHEMA);
      } else if (appId !== APPLICATION_ID) {
        throw new Error('not an earwitness session log (it is some other SQLite database)');
      } else if (version !== LOG_SCHEMA_VERSION) {
        throw new Error(`session log format ${version}, this earwitness reads format ${LOG_SCHEMA_VERSION}`);
      }
      if (!options.readonly) {
        db.exec(SCHEMA); // every table IF NOT EXISTS: an older log gains the scores table
        const columns = db.prepare('SELECT name FROM pragma_table_info(\'warnings\')').all() as { name: string }[];
        if (!columns.some((c) => c.name === STRETCH_COLUMN)) db.exec(`ALTER TABLE warnings ADD COLUMN ${STRETCH_COLUMN} TEXT`);
        db.pragma('journal_mode = WAL');
        // NORMAL in WAL mode: a committed note survives the process being killed; only power loss can take the last commits.
        db.pragma('synchronous = NORMAL');
        if (options.checkpointsElsewhere) db.pragma('wal_autocheckpoint = 0');
      }
      db.pragma('foreign_keys = ON');
    } catch (e) {
      db.close();
      const msg = (e as Error).message;
      throw new SessionLogError(file, /file is not a database|malformed/i.test(msg) ? 'damaged or not a SQLite file' : msg);
    }
    return new SessionLog(file, db);
  }

  startSession(info: SessionInfo, startedAt = new Date()): number {
    const r = this.db
      .prepare('INSERT INTO sessions (started_at, corpus, preset, settings) VALUES (?, ?, ?, ?)')
      .run(startedAt.toISOString(), info.corpus, info.preset, JSON.stringify(info.settings));
    return Number(r.lastInsertRowid);
  }

  addNote(session: number, note: LoggedNote): void {
    this.insertNote.run(session, note.seq, note.onset, note.duration, note.pitch, note.velocity, note.channel, note.receivedAt);
  }

  addWarning(session: number, w: NewWarning): number {
    const r = this.insertWarning.run(session, w.seq, w.raisedAt, w.piece, w.title, w.score, w.transposition, w.pieceStart, w.startBeat, w.stretch ? JSON.stringify(w.stretch) : null);
    return Number(r.lastInsertRowid);
  }

  addScore(session: number, s: LoggedScore): void {
    this.insertScore?.run(session, s.seq, s.time, s.score, s.windowStart, s.windowNotes, s.piece, s.transposition, s.pieceStart, s.matched);
  }

  /**
   * A session's live scores in the order they were made. A session the
   * daemon logged them for says so in its settings (`liveScores: true`);
   * one logged before they were kept has none.
   */
  scores(session: number): LoggedScore[] {
    if (!this.hasScores()) return [];
    return (this.db.prepare('SELECT * FROM scores WHERE session_id = ? ORDER BY rowid').all(session) as Record<string, never>[]).map((r) => ({
      seq: r['seq'], time: r['time'], score: r['score'], windowStart: r['window_start'], windowNotes: r['window_notes'],
      piece: r['piece'], transposition: r['transposition'], pieceStart: r['piece_start'], matched: r['matched'],
    }));
  }

  clearWarning(warning: number, at: number): void {
    this.db.prepare('UPDATE warnings SET cleared_at = ? WHERE id = ?').run(at, warning);
  }

  /** The session's time signature from now on, as `/ew/meter` says it: kept in its settings (`meter`). */
  setMeter(session: number, meter: string): void {
    this.db.prepare("UPDATE sessions SET settings = json_set(settings, '$.meter', ?) WHERE id = ?").run(meter, session);
  }

  endSession(session: number, endedAt = new Date()): void {
    this.db.prepare('UPDATE sessions SET ended_at = ? WHERE id = ?').run(endedAt.toISOString(), session);
  }

  listSessions(): SessionSummary[] {
    const rows = this.db
      .prepare(
        `SELECT s.id, s.started_at, s.ended_at, s.corpus, s.preset, s.settings,
          (SELECT count(*) FROM notes n WHERE n.session_id = s.id) AS notes,
          (SELECT count(*) FROM warnings w WHERE w.session_id = s.id) AS warnings
         FROM sessions s ORDER BY s.id`,
      )
      .all() as { id: number; started_at: string; ended_at: string | null; corpus: string; preset: string; settings: string; notes: number; warnings: number }[];
    return rows.map((r) => ({ id: r.id, start: r.started_at, end: r.ended_at, corpus: r.corpus, preset: r.preset, settings: safeJson(r.settings), notes: r.notes, warnings: r.warnings }));
  }

  /** A session by id, or the newest with `'latest'`; null when there is none. */
  session(id: number | 'latest'): { summary: SessionSummary; notes: LoggedNote[]; warnings: LoggedWarning[]; scores: LoggedScore[] } | null {
    const all = this.listSessions();
    const summary = id === 'latest' ? all[all.length - 1] : all.find((s) => s.id === id);
    if (!summary) return null;
    const notes = (this.db.prepare('SELECT * FROM notes WHERE session_id = ? ORDER BY seq').all(summary.id) as Record<string, number>[]).map((r) => ({
      seq: r.seq, onset: r.onset, duration: r.duration, pitch: r.pitch, morph: r.pitch, velocity: r.velocity, channel: r.channel, receivedAt: r.received_at,
    }));
    const warnings = (this.db.prepare('SELECT * FROM warnings WHERE session_id = ? ORDER BY id').all(summary.id) as Record<string, never>[]).map((r) => ({
      id: r['id'], seq: r['seq'], raisedAt: r['raised_at'], piece: r['piece'], title: r['title'], score: r['score'],
      transposition: r['transposition'], pieceStart: r['piece_start'], startBeat: r['start_beat'], clearedAt: r['cleared_at'],
      ...(r['stretch'] ? { stretch: loggedStretch(r['stretch']) } : {}),
    }));
    return { summary, notes, warnings, scores: this.scores(summary.id) };
  }

  close(): void {
    if (this.db.open) this.db.close();
  }
}

/** A warning row's stretch, checked; a row whose stretch cannot be read is shown without it. */
function loggedStretch(text: string): StretchSummary | undefined {
  const r = stretchSchema.safeParse(safeJson(text));
  return r.success ? r.data : undefined;
}

const stretchSchema = z.object({ startBeat: z.number(), endBeat: z.number(), notes: z.number().int().min(0), beats: z.number().positive(), threshold: z.number(), score: z.number().min(0).max(1) });

function safeJson(s: string): Record<string, unknown> {
  try {
    return JSON.parse(s) as Record<string, unknown>;
  } catch {
    return {};
  }
}

/**
 * A connection to a log that only copies its write-ahead file back into it
 * (a passive checkpoint: it never waits for a writer, and no writer waits
 * for it), for the connection opened with `checkpointsElsewhere`.
 *
 * @example
 *   const c = checkpointConnection(file);
 *   c.checkpoint();
 *   c.close();
 */
export function checkpointConnection(file: string): { checkpoint(): void; close(): void } {
  const db = new Database(file, { fileMustExist: true });
  return {
    checkpoint: () => void db.pragma('wal_checkpoint(PASSIVE)'),
    close: () => db.close(),
  };
}
