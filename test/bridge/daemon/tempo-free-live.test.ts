/**
 * `listen --tempo-free` end to end: through the daemon (preset jam, OSC in),
 * unrelated playing, then 24 beats of a corpus melody played 1.5 times as
 * long (36 beats). With the flag, once the window lies inside the quote the
 * scores name the melody, reach 0.8 and give its time scale within 2%, the
 * piano roll's excerpt marked on that time; without it, the same stream at the
 * written tempo's matching scores under 0.5 there. Melodies are invented
 * (test/helpers/daemon.ts); OSC messages are encoded by the `osc` package
 * (OSC 1.0).
 */
import { createSocket } from 'node:dgram';
import osc from 'osc';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Note } from '../../../core/note.js';
import type { ScoreEvent, WarningEvent } from '../../../contract/events.js';
import { type TestCorpus, listen, melody, passage, spawnDaemon, writeCorpus } from '../../helpers/daemon.js';

const QUOTE_AT = 16;
const SCALE = 1.5;

/** Own playing, then beats 0–24 of a corpus melody at 1.5 times their length. */
function stream(corpus: TestCorpus): Note[] {
  const own = melody(611, QUOTE_AT);
  const quote = passage(corpus.pieces['cinderpath.mid'], 0, 24, 0, 0).map((n) => ({ ...n, onset: QUOTE_AT + n.onset * SCALE, duration: n.duration * SCALE }));
  return [...own, ...quote];
}

/** The scores of every note of `played`, sent one at a time to a daemon started with `flags`, and the warnings raised. */
async function heard(corpus: TestCorpus, played: readonly Note[], flags: string[]): Promise<{ scores: ScoreEvent[]; warnings: WarningEvent[] }> {
  const d = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'jam', '--input', 'osc', ...flags]);
  try {
    const events = await listen(d.http);
    const socket = createSocket('udp4');
    const out: ScoreEvent[] = [];
    for (const [i, n] of played.entries()) {
      const bytes = osc.writePacket({ address: '/ew/note', args: [{ type: 'i', value: n.pitch }, { type: 'i', value: n.velocity }, { type: 'f', value: n.duration }, { type: 'f', value: n.onset }] }, { metadata: true });
      socket.send(bytes, d.osc, '127.0.0.1');
      out.push(await events.next<ScoreEvent>((e) => e.type === 'score' && e.seq === i + 1));
    }
    socket.close();
    const warnings = events.events.filter((e): e is WarningEvent => e.type === 'warning');
    events.close();
    return { scores: out, warnings };
  } finally {
    await d.stop();
  }
}

describe('a quote played slower', () => {
  let corpus: TestCorpus;
  beforeAll(() => {
    corpus = writeCorpus();
  });

  it('is found with --tempo-free once the window lies inside it, and not without', async () => {
    const played = stream(corpus);
    // Windows wholly inside the quote: starting at or after its first beat.
    const inside = (e: ScoreEvent): boolean => e.windowStart >= QUOTE_AT;
    const withFlag = await heard(corpus, played, ['--tempo-free']);
    const free = withFlag.scores.filter(inside);
    expect(free.length).toBeGreaterThan(3);
    const best = free.reduce((a, b) => (b.score > a.score ? b : a));
    expect(best.piece).toBe('cinderpath.mid');
    expect(best.score).toBeGreaterThanOrEqual(0.8);
    // The tempo it was heard at, and the excerpt sent for the piano roll marked on that time: every note matched.
    expect(Math.abs(best.timeScale! / SCALE - 1)).toBeLessThan(0.02);
    expect(best.excerpt!.filter((n) => n.matched).length).toBe(best.matched);
    // The warning raised names the melody and the tempo it was heard at.
    const warned = withFlag.warnings.find((w) => w.piece === 'cinderpath.mid' && w.timeScale !== undefined);
    expect(warned).toBeDefined();
    expect(Math.abs(warned!.timeScale! / SCALE - 1)).toBeLessThan(0.02);
    const fixed = (await heard(corpus, played, ['--no-tempo-free'])).scores.filter(inside);
    const fixedBest = Math.max(...fixed.map((e) => e.score));
    console.log(`a quote at 1.5× its length: best ${best.score.toFixed(3)} tempo-free (${best.piece}), ${fixedBest.toFixed(3)} at the written tempo, over ${free.length} windows`);
    expect(fixedBest).toBeLessThan(0.5);
  });
});
