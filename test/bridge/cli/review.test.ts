import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { execFileSync } from 'node:child_process';
import { copyFileSync, existsSync, mkdirSync, readFileSync, readdirSync, rmSync, statSync, truncateSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { parseMidi as parseWithMidiFile } from 'midi-file';
import { CAUTION } from '../../../core/report.js';
import { readMidi } from '../../../bridge/formats/midi-file.js';
import { SessionLog } from '../../../bridge/formats/session-log.js';
import { tool } from '../../helpers/which.js';
import { CLI, PIECES, BETWEEN, QUOTE, SETTINGS, cli, reviewWorld, type ReviewWorld } from '../../helpers/review-session.js';

const midicsv = tool('midicsv', 'midicsv');
const hash = (file: string): string => createHash('sha256').update(readFileSync(file)).digest('hex');
/** Hashes of the log and its WAL, when there is one: what must not change. */
const hashes = (log: string): Record<string, string> =>
  Object.fromEntries([log, `${log}-wal`].filter((f) => existsSync(f) && statSync(f).size > 0).map((f) => [f, hash(f)]));

let w: ReviewWorld;
beforeAll(() => {
  if (!existsSync(CLI)) throw new Error(`${CLI} is missing: build first with "npx tsc -p tsconfig.json" (npm test does)`);
  w = reviewWorld();
});
afterAll(() => {
  if (w) rmSync(w.dir, { recursive: true, force: true });
});

describe('earwitness sessions', () => {
  it('--json lists each session with id, start, end, corpus, preset, notes and warnings', () => {
    const r = cli(['sessions', '--log', w.log, '--json']);
    expect(r.code, r.stderr).toBe(0);
    const list = JSON.parse(r.stdout);
    expect(list).toHaveLength(3);
    expect(list[0]).toMatchObject({ id: w.played, start: '2025-06-01T18:00:00.000Z', corpus: w.corpus, preset: 'harbour', notes: w.notes.length, warnings: 1, settings: SETTINGS });
    expect(typeof list[0].end).toBe('string');
    expect(list[2]).toMatchObject({ id: w.empty, notes: 0, warnings: 0 });
  });

  it('prints a table a person can read', () => {
    const r = cli(['sessions', '--log', w.log]);
    expect(r.code, r.stderr).toBe(0);
    const [head, first] = r.stdout.split('\n');
    expect(head.split(/\s{2,}/)).toEqual(['id', 'start (UTC)', 'end (UTC)', 'corpus', 'preset', 'notes', 'warnings']);
    expect(first).toMatch(new RegExp(`^\\s*1\\s+2025-06-01 18:00:00\\s+2025-06-01 18:00:28\\s+\\S+corpus\\s+harbour\\s+${w.notes.length}\\s+1$`));
  });

  it('with no log at the default place says so and lists nothing', () => {
    const env = { ...process.env, XDG_DATA_HOME: join(w.dir, 'nowhere') };
    const out = execFileSync(process.execPath, [CLI, 'sessions', '--json'], { env, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
    expect(JSON.parse(out)).toEqual([]);
  });
});

describe('earwitness review', () => {
  it('--json gives id, notes, warnings, originality and windows with the batch report’s window fields', () => {
    const r = cli(['review', 'latest', '--log', w.log, '--json']);
    // "latest" is the empty session 3: a clear error, tested below. Review session 1 by id.
    expect(r.code).toBe(2);
    const ok = cli(['review', String(w.played), '--log', w.log, '--json']);
    expect(ok.code, ok.stderr).toBe(0);
    const j = JSON.parse(ok.stdout);
    expect(j).toMatchObject({ id: w.played, notes: w.notes.length, caution: CAUTION, settings: { window: 16, hop: 8, pitch: 'chromatic', threshold: 0.5, bpm: 100 } });
    expect(j.warnings).toHaveLength(1);
    expect(j.warnings[0]).toMatchObject({ title: PIECES[QUOTE.piece].title, transposition: QUOTE.transposition, pieceStart: QUOTE.from, startBeat: QUOTE.at, elapsed: expect.any(Number) });
    // Windows of 16 beats, hop 8, over 48 beats: starts 0, 8, …, 40.
    expect(j.windows.map((x: { start: number }) => x.start)).toEqual([0, 8, 16, 24, 32, 40]);
    for (const x of j.windows) expect(Object.keys(x).sort()).toEqual(['bar', 'beatInBar', 'end', 'match', 'notes', 'score', 'start', 'tooShort']);
    // The session counts in 4/4 (no metre logged): window starts 0, 8, 16 … are bars 1, 3, 5 …, beat 1.
    expect(j.windows.map((x: { bar: number; beatInBar: number }) => `${x.bar}:${x.beatInBar}`)).toEqual(['1:1', '3:1', '5:1', '7:1', '9:1', '11:1']);
    // Logged before live scores were kept: no live curve, and the review says so.
    expect(j.live).toBeNull();
    const quoted = j.windows.find((x: { start: number }) => x.start === QUOTE.at);
    expect(quoted).toMatchObject({ score: 1, match: { piece: PIECES[QUOTE.piece].file, title: PIECES[QUOTE.piece].title, pieceStart: QUOTE.from, transposition: QUOTE.transposition } });
    // Windows of fewer than 8 notes are listed but too short to judge.
    const judged = j.windows.filter((x: { notes: number; tooShort: boolean }) => (expect(x.tooShort).toBe(x.notes < 8), !x.tooShort));
    expect(judged.length).toBeGreaterThan(0);
    expect(j.originality).toBeCloseTo(1 - judged.reduce((s: number, x: { score: number }) => s + x.score, 0) / judged.length, 12);
    expect(j.worst[0]).toMatchObject({ rank: 1, window: { start: QUOTE.at, score: 1 } });
    expect(j.worst[0].query.every((n: { matched: boolean }) => n.matched)).toBe(true);
  });

  it('snaps played onsets to the session’s grid, as the live scorer heard them', () => {
    const log = join(w.dir, 'jittery.db');
    const db = SessionLog.open(log);
    const jitter = (i: number): number => [0.011, -0.009, 0.004, -0.013][i % 4];
    for (const grid of [0, 12]) {
      const id = db.startSession({ corpus: w.corpus, preset: 'jam', settings: { ...SETTINGS, grid } });
      w.notes.forEach((n, i) => db.addNote(id, { ...n, onset: Math.max(0, n.onset + jitter(i)) }));
    }
    db.close();
    const scoreAt = (id: string) => JSON.parse(cli(['review', id, '--log', log, '--json']).stdout).windows.find((x: { start: number }) => x.start === QUOTE.at).score;
    // Off the beat by about 10 ms, the quote no longer coincides exactly; snapped to twelfths it does.
    expect(scoreAt('1')).toBeLessThan(0.5);
    expect(scoreAt('2')).toBe(1);
  });

  it('--midi writes the whole session: midi-file and our reader see every logged note', () => {
    const out = join(w.dir, 'out', 'session.mid');
    const r = cli(['review', '1', '--log', w.log, '--midi', out]);
    expect(r.code, r.stderr).toBe(0);
    const smf = parseWithMidiFile(readFileSync(out));
    const ons = smf.tracks.flat().filter((e) => e.type === 'noteOn' && (e as { velocity: number }).velocity > 0);
    expect(ons).toHaveLength(w.notes.length);
    // SMF 1.0 tempo: 60,000,000 µs / 100 bpm.
    expect(smf.tracks.flat().find((e) => e.type === 'setTempo')).toMatchObject({ microsecondsPerBeat: 600000 });
    const back = readMidi(out).notes;
    expect(back.map((n) => [n.onset, n.pitch, n.channel])).toEqual(w.notes.map((n) => [Math.round(n.onset * 3840) / 3840, n.pitch, n.channel]));
  });

  it.skipIf(!midicsv.path)(`--midi round-trips through Debian's ${midicsv.label}: it reads as many notes as were logged`, () => {
    const out = join(w.dir, 'out', 'session-csv.mid');
    expect(cli(['review', '1', '--log', w.log, '--midi', out])).toMatchObject({ code: 0 });
    const rows = execFileSync('midicsv', [out], { encoding: 'utf8' }).split('\n').map((l) => l.split(',').map((c) => c.trim()));
    // midicsv(1): "Track, Time, Note_on_c, Channel, Note, Velocity"; velocity 0 would be a Note Off.
    expect(rows.filter((r) => r[2] === 'Note_on_c' && Number(r[5]) > 0)).toHaveLength(w.notes.length);
  });

  it('--pairs writes each worst window and its corpus excerpt, each at its own pitch, from beat 0', () => {
    const dir = join(w.dir, 'pairs');
    const r = cli(['review', '1', '--log', w.log, '--pairs', dir, '--worst', '2']);
    expect(r.code, r.stderr).toBe(0);
    expect(readdirSync(dir).sort()).toEqual(['pair-1-corpus.mid', 'pair-1-session.mid', 'pair-2-corpus.mid', 'pair-2-session.mid', 'warning-1-corpus.mid', 'warning-1-session.mid']);
    const corpus = readMidi(join(dir, 'pair-1-corpus.mid')).notes;
    const session = readMidi(join(dir, 'pair-1-session.mid')).notes;
    const expected = PIECES[QUOTE.piece].notes.filter((n) => n.onset >= QUOTE.from && n.onset < QUOTE.to);
    expect(corpus.map((n) => [n.onset, n.pitch])).toEqual(expected.map((n) => [n.onset - QUOTE.from, n.pitch]));
    expect(session.map((n) => [n.onset, n.pitch])).toEqual(expected.map((n) => [n.onset - QUOTE.from, n.pitch + QUOTE.transposition]));
  });

  it('refuses to write any output over the session log', () => {
    const before = hashes(w.log);
    const r = cli(['review', '1', '--log', w.log, '--html', w.log]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('that is the session log');
    expect(hashes(w.log)).toEqual(before);
  });

  it('refuses a baseline computed with other settings, naming both', () => {
    const file = join(w.dir, 'baseline-8.json');
    const b = cli(['baseline', '--corpus', w.corpus, '--window', '8', '--hop', '4', '--samples', '3', '--json']);
    expect(b.code, b.stderr).toBe(0);
    writeFileSync(file, b.stdout);
    const r = cli(['review', '1', '--log', w.log, '--baseline', file, '--html', join(w.dir, 'x.html')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--baseline .*baseline-8\.json: computed with window 8, hop 4, .* but these scores use window 16, hop 8/);
  });

  it('says which field of a baseline file is wrong', () => {
    const file = join(w.dir, 'baseline-bad.json');
    writeFileSync(file, JSON.stringify({ originality: 0.7, ci95: null }));
    const r = cli(['review', '1', '--log', w.log, '--baseline', file]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/baseline-bad\.json: field samples: .*expected the output of "earwitness baseline --json"/);
  });
});

describe('the review as heard: live scores and the live warnings’ own excerpts', () => {
  it('an old log without live scores still reviews, and says so', () => {
    const r = cli(['review', String(w.played), '--log', w.log]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toContain('live scores: not in the log');
  });

  it('--json carries one live entry per scoring pass, placed in bars, and the warning’s excerpt pair', () => {
    const r = cli(['review', String(w.heard), '--log', w.log, '--json']);
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.live).toHaveLength(w.passes);
    const hot = j.live.find((p: { piece: string | null }) => p.piece !== null);
    expect(hot).toMatchObject({ seq: expect.any(Number), beat: expect.any(Number), bar: expect.any(Number), beatInBar: expect.any(Number), score: expect.any(Number), piece: PIECES[BETWEEN.piece].file, title: PIECES[BETWEEN.piece].title, transposition: BETWEEN.transposition });
    // The warned window starts at beat 12: bar 4, beat 1 in 4/4; the piece's beat 4 is its bar 2, beat 1.
    expect(j.warnings[0]).toMatchObject({ startBeat: BETWEEN.at, bar: 4, beatInBar: 1, pieceStart: BETWEEN.from, pieceBar: 2, pieceBeatInBar: 1 });
    expect(j.warned).toHaveLength(1);
    const pair = j.warned[0];
    const expected = PIECES[BETWEEN.piece].notes.filter((n) => n.onset >= BETWEEN.from && n.onset < BETWEEN.to);
    expect(pair.corpus.map((n: { onset: number; pitch: number }) => [n.onset, n.pitch])).toEqual(expected.map((n) => [n.onset, n.pitch]));
    expect(pair.query.map((n: { onset: number; pitch: number }) => [n.onset, n.pitch])).toEqual(expected.map((n) => [n.onset - BETWEEN.from + BETWEEN.at, n.pitch + BETWEEN.transposition]));
    expect(pair.query.every((n: { matched: boolean }) => n.matched)).toBe(true);
  });

  it('a live warning between the fixed windows: each fixed window holds only part of the quote, the page shows the warning with its own piano rolls', () => {
    const html = join(w.dir, 'heard.html');
    const dir = join(w.dir, 'heard-pairs');
    const r = cli(['review', String(w.heard), '--log', w.log, '--json', '--html', html, '--pairs', dir]);
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    // No fixed window (starts 0, 8, 16, 24 …) starts where the warned one does, and none scores what the warning did.
    expect(j.windows.some((x: { start: number }) => x.start === BETWEEN.at)).toBe(false);
    for (const x of j.windows) expect(x.score).toBeLessThan(0.97);
    const page = readFileSync(html, 'utf8');
    const figure = page.slice(page.indexOf('id="warning-1"'));
    expect(page).toContain('id="warning-1"');
    // Two piano rolls (an <svg> each) in the warning's figure, the quoted bars of the session beside the piece's.
    expect(figure.slice(0, figure.indexOf('</div></div>')).match(/<svg /g)).toHaveLength(2);
    expect(figure).toContain(`resemble “${PIECES[BETWEEN.piece].title}” bars 2:1–6:1, 2 semitones down`);
    expect(page).toContain('live score as it was heard');
    expect(page).toContain('a live warning can fall between them');
    const session = readMidi(join(dir, 'warning-1-session.mid')).notes;
    expect(session).toHaveLength(j.warned[0].query.length);
  });
});

describe('reviewing what cannot be reviewed: exit 2, a clear error, the log as it was', () => {
  const refused = (log: string, args: string[], message: RegExp): void => {
    const before = hashes(log);
    expect(Object.keys(before).length).toBeGreaterThan(0);
    const r = cli(['review', ...args, '--log', log, '--html', join(w.dir, 'never.html')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/\n\s+at /); // no stack trace
    expect(hashes(log)).toEqual(before);
    expect(existsSync(join(w.dir, 'never.html'))).toBe(false);
  };

  it('an unknown session', () => refused(w.log, ['99'], /sessions\.db: no session 99 in the log \(it holds sessions 1–3/));
  it('an empty session', () => refused(w.log, [String(w.empty)], /sessions\.db: session 3 holds no notes, so there is nothing to review/));
  it('"latest" when the latest session is empty', () => refused(w.log, ['latest'], /session 3 holds no notes/));

  it('a session whose settings cannot be used', () => {
    const log = join(w.dir, 'bad-settings.db');
    const db = SessionLog.open(log);
    const id = db.startSession({ corpus: w.corpus, preset: 'p', settings: { window: -4 } });
    db.addNote(id, { ...w.notes[0] });
    db.close();
    refused(log, [String(id)], /bad-settings\.db: session 1 has unusable settings: settings\.window: /);
  });

  it('a session holding a damaged note', () => {
    const log = join(w.dir, 'bad-note.db');
    const db = SessionLog.open(log);
    const id = db.startSession({ corpus: w.corpus, preset: 'p', settings: {} });
    db.addNote(id, { ...w.notes[0] });
    db.addNote(id, { ...w.notes[1], pitch: 300 });
    db.close();
    refused(log, ['1'], new RegExp(`bad-note\\.db: session 1 is damaged: note ${w.notes[1].seq} has pitch 300 \\(expected a whole number 0–127\\)`));
  });

  it('a log that is not SQLite at all', () => {
    const log = join(w.dir, 'garbage.db');
    writeFileSync(log, Buffer.alloc(8192, 0x5a));
    refused(log, ['1'], /garbage\.db: damaged or not a SQLite file/);
  });

  it('a log cut short', () => {
    const log = join(w.dir, 'cut.db');
    copyFileSync(w.log, log);
    truncateSync(log, 6000);
    refused(log, ['1'], /cut\.db: damaged/);
  });

  it('some other SQLite database', () => {
    const log = join(w.dir, 'other.db');
    const db = new Database(log);
    db.exec('CREATE TABLE t (x); INSERT INTO t VALUES (1);');
    db.close();
    refused(log, ['1'], /other\.db: not an earwitness session log/);
  });

  it('a live WAL-mode log: the log and its WAL are untouched, and a good session still reviews', () => {
    const log = join(w.dir, 'live', 'sessions.db');
    mkdirSync(join(w.dir, 'live'));
    const writer = SessionLog.open(log);
    try {
      const id = writer.startSession({ corpus: w.corpus, preset: 'live', settings: SETTINGS });
      for (const n of w.notes) writer.addNote(id, n);
      const empty = writer.startSession({ corpus: w.corpus, preset: 'live', settings: SETTINGS });
      // The writer is still open, so what it wrote sits in the WAL, not yet in the main file.
      expect(statSync(`${log}-wal`).size).toBeGreaterThan(0);
      refused(log, ['42'], /no session 42/);
      refused(log, [String(empty)], /holds no notes/);
      const before = hashes(log);
      const r = cli(['review', String(id), '--log', log, '--json']);
      expect(r.code, r.stderr).toBe(0);
      expect(JSON.parse(r.stdout).notes).toBe(w.notes.length);
      expect(hashes(log)).toEqual(before);
    } finally {
      writer.close();
    }
  });

  it('a log that does not exist', () => {
    const r = cli(['review', '1', '--log', join(w.dir, 'absent.db')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/absent\.db: no session log there/);
    expect(existsSync(join(w.dir, 'absent.db'))).toBe(false);
  });

  it('a session id that is not one', () => {
    const r = cli(['review', 'first', '--log', w.log]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/session must be an id .* or "latest"; got "first"/);
  });
});

describe('earwitness report --html', () => {
  it('shows two query folders as a two-point series beside the baseline', () => {
    const a = join(w.dir, 'ckpt-a');
    const b = join(w.dir, 'ckpt-b');
    mkdirSync(a);
    mkdirSync(b);
    // Checkpoint a copies corpus pieces outright; checkpoint b holds the session (one quote among free playing) and a short excerpt of it.
    copyFileSync(join(w.corpus, PIECES[0].file), join(a, 'one.mid'));
    copyFileSync(join(w.corpus, PIECES[2].file), join(a, 'two.mid'));
    const session = join(w.dir, 'out', 'for-report.mid');
    expect(cli(['review', '1', '--log', w.log, '--midi', session])).toMatchObject({ code: 0 });
    copyFileSync(session, join(b, 'take.mid'));
    copyFileSync(join(w.dir, 'pairs', 'pair-2-session.mid'), join(b, 'short.mid'));
    const baseline = join(w.dir, 'baseline.json');
    const bl = cli(['baseline', '--corpus', w.corpus, '--samples', '3', '--json']);
    writeFileSync(baseline, bl.stdout);
    const html = join(w.dir, 'report.html');
    const r = cli(['report', a, b, '--corpus', w.corpus, '--html', html, '--baseline', baseline, '--json']);
    expect(r.code, r.stderr).toBe(0);
    const page = readFileSync(html, 'utf8');
    const series = /<svg[^>]*aria-label="originality by folder"[\s\S]*?<\/svg>/.exec(page)?.[0] ?? '';
    expect(series.match(/class="series-point"/g)).toHaveLength(2);
    const folderOriginality = (folder: string) => {
      const qs = JSON.parse(r.stdout).queries.filter((q: { file: string }) => q.file.startsWith(folder));
      const scores = qs.flatMap((q: { windows: { score: number }[] }) => q.windows.map((x) => x.score));
      return 1 - scores.reduce((s: number, x: number) => s + x, 0) / scores.length;
    };
    // Checkpoint a is the corpus itself: originality 0.
    expect(folderOriginality(a)).toBeCloseTo(0, 12);
    expect(series).toContain(`${a}: originality 0.0%`);
    expect(series).toContain(`${b}: originality ${(100 * folderOriginality(b)).toFixed(1)}%`);
    expect(series).toContain('human baseline');
    expect(page).toContain(CAUTION.replace(/'/g, '&#39;'));
  });
});
