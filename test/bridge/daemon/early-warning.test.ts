/**
 * Warned early: through `earwitness listen` as shipped (preset jam, OSC in),
 * 24 beats of unrelated playing, then a verbatim 8-beat quote of a corpus
 * melody, then unrelated playing again. The warning must come within 4
 * beats of the quote's first note — a quarter of the 16-beat window — name
 * the piece and the recent stretch that matched, and the session log must
 * keep that stretch. Then a quote of a two-voice piece with one note left
 * out: warned within 4 beats by a stretch below its threshold that holds
 * nothing the piece lacks, and later with `--early-left-out 0`. Melodies are
 * invented (test/helpers/daemon.ts); OSC messages are encoded by the `osc`
 * package (OSC 1.0, test/helpers/proc.ts `noteBytes`).
 */
import { createSocket } from 'node:dgram';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Note } from '../../../core/note.js';
import type { ScoreEvent, WarningEvent } from '../../../contract/events.js';
import { SessionLog } from '../../../bridge/formats/session-log.js';
import { midiBytes } from '../../../bridge/formats/midi-write.js';
import { noteBytes } from '../../helpers/proc.js';
import { type SpawnedDaemon, type TestCorpus, listen, melody, passage, spawnDaemon, tempDir, writeCorpus } from '../../helpers/daemon.js';

/** Plays `notes` over OSC one at a time, each after its score event; resolves with the warnings raised. */
async function play(d: SpawnedDaemon, notes: readonly Note[]): Promise<WarningEvent[]> {
  const events = await listen(d.http);
  const socket = createSocket('udp4');
  for (const [i, n] of notes.entries()) {
    socket.send(noteBytes(n.pitch, n.duration, n.onset), d.osc, '127.0.0.1');
    // One note at a time, each scored on its own: the warning's note is then the note it was raised at.
    await events.next<ScoreEvent>((e) => e.type === 'score' && e.seq === i + 1);
  }
  socket.close();
  // A warning follows its score event at once.
  await new Promise((r) => setTimeout(r, 100));
  events.close();
  return events.events.filter((e): e is WarningEvent => e.type === 'warning');
}

const QUOTE_AT = 24;

describe('a quote spliced into unrelated playing', () => {
  let corpus: TestCorpus;
  let d: SpawnedDaemon;
  beforeAll(async () => {
    corpus = writeCorpus();
    d = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'jam', '--input', 'osc']);
  });
  afterAll(async () => {
    await d?.stop();
  });

  it('is warned about within 4 beats of its first note, naming the recent stretch', async () => {
    const own = (seed: number, at: number, beats: number): Note[] => melody(seed, beats).map((n) => ({ ...n, onset: n.onset + at }));
    const quote = passage(corpus.pieces['cinderpath.mid'], 8, 16, QUOTE_AT, 0);
    const played = [...own(501, 0, QUOTE_AT), ...quote, ...own(503, QUOTE_AT + 8, 8)];
    const warnings = await play(d, played);
    expect(warnings.length).toBeGreaterThan(0);
    const first = warnings[0];
    const raisedAt = played[first.seq - 1].onset;
    console.log(`early warning: raised ${raisedAt - QUOTE_AT} beats into the quote, stretch ${JSON.stringify(first.stretch)}`);
    expect(raisedAt).toBeGreaterThanOrEqual(QUOTE_AT);
    expect(raisedAt - QUOTE_AT).toBeLessThanOrEqual(4);
    expect(first).toMatchObject({ piece: 'cinderpath.mid', transposition: 0 });
    expect(first.stretch).toBeDefined();
    const s = first.stretch!;
    expect(s.startBeat).toBeGreaterThanOrEqual(QUOTE_AT);
    expect(s.endBeat).toBe(raisedAt);
    expect(s.notes).toBe(played.filter((n) => n.onset >= s.startBeat && n.onset <= s.endBeat).length);
    expect(s.score).toBeGreaterThanOrEqual(s.threshold);
    // The excerpt warned about starts where the stretch does in the piece: 8 beats in, as quoted.
    expect(first.startBeat - first.pieceStart).toBeCloseTo(QUOTE_AT - 8, 6);
    // The unrelated playing before the quote raised nothing.
    expect(warnings.filter((w) => played[w.seq - 1].onset < QUOTE_AT)).toEqual([]);

    const log = SessionLog.open(d.log, { readonly: true });
    const logged = log.session('latest')!.warnings;
    log.close();
    expect(logged[0].stretch).toEqual(s);
  });
});

describe('a quote of a two-voice piece with a note left out', () => {
  /** An invented piece of two melodies at once, about three notes a beat: a 4-beat stretch of it holds a dozen. */
  const twoVoices: Note[] = [...melody(61), ...melody(67).map((n) => ({ ...n, pitch: n.pitch - 24, morph: n.pitch - 24 }))].sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
  const dir = tempDir('two-voices');
  writeFileSync(join(dir, 'saltmarsh.mid'), midiBytes([{ name: 'voices', channel: 1, notes: twoVoices }], { title: 'saltmarsh', bpm: 120 }));
  const quote = passage(twoVoices, 8, 16, QUOTE_AT, 0);
  /** The note left out: the upper voice's first note from halfway through the quote's second beat, inside every stretch of its first 4 beats. */
  const dropped = quote.find((n) => n.onset >= QUOTE_AT + 1.5 && n.pitch >= 60)!;
  const played = [...melody(501).filter((n) => n.onset < QUOTE_AT).map((n) => ({ ...n, pitch: n.pitch - 30, morph: n.pitch - 30 })), ...quote.filter((n) => n !== dropped)];

  const firstWarning = async (flags: string[]): Promise<WarningEvent | undefined> => {
    const d = await spawnDaemon(['--corpus', dir, '--preset', 'jam', '--input', 'osc', ...flags]);
    try {
      return (await play(d, played))[0];
    } finally {
      await d.stop();
    }
  };

  it('is warned about within 4 beats by a stretch below its threshold that holds nothing the piece lacks; with --early-left-out 0, later', async () => {
    const first = await firstWarning([]);
    expect(first).toBeDefined();
    const raisedAt = played[first!.seq - 1].onset;
    console.log(`note left out: raised ${raisedAt - QUOTE_AT} beats into the quote, stretch ${JSON.stringify(first!.stretch)}`);
    expect(raisedAt - QUOTE_AT).toBeGreaterThanOrEqual(0);
    expect(raisedAt - QUOTE_AT).toBeLessThanOrEqual(4);
    expect(first).toMatchObject({ piece: 'saltmarsh.mid', transposition: 0 });
    const s = first!.stretch!;
    expect(s.startBeat).toBeLessThanOrEqual(dropped.onset);
    expect(s.score).toBeLessThan(s.threshold);
    // Every note of the stretch matched, and the piece's passage holds one more: the note left out.
    expect(s.score).toBeCloseTo(s.notes / (s.notes + 1), 9);

    const strict = await firstWarning(['--early-left-out', '0']);
    expect(strict).toBeDefined();
    console.log(`with --early-left-out 0: raised ${played[strict!.seq - 1].onset - QUOTE_AT} beats into the quote`);
    expect(played[strict!.seq - 1].onset).toBeGreaterThan(raisedAt);
  });
});
