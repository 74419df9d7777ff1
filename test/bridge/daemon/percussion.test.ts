/**
 * Channel 10 live: General MIDI puts percussion there (drum sounds, not
 * pitches; MIDI 1.0 General MIDI Level 1), and corpus files leave it out, so
 * the daemon leaves it out too unless told `percussion`. And the session log
 * keeps every live scoring pass, compactly, for the review.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { startDaemon } from '../../../bridge/daemon/daemon.js';
import { loadPreset } from '../../../bridge/formats/presets.js';
import { SessionLog } from '../../../bridge/formats/session-log.js';
import { WORKER_URL, tempDir, writeCorpus } from '../../helpers/daemon.js';

async function play(percussion: boolean): Promise<{ notes: number; scores: number; liveScores: unknown }> {
  const corpus = writeCorpus();
  const log = join(tempDir('percussion'), 'sessions.db');
  const daemon = await startDaemon({
    corpus: corpus.dir, preset: { ...loadPreset('livecode'), threshold: 0.7 }, oscPort: 0, httpPort: 0, oscOut: null,
    midi: { input: null, thru: null, channels: null }, percussion, log, workerUrl: WORKER_URL, notice: () => {},
  });
  const now = Date.now();
  // A kick drum (36) on channel 10 on every beat, and a melody on channel 1.
  for (let b = 0; b < 8; b++) {
    daemon.handle({ kind: 'note', pitch: 36, velocity: 100, duration: 0.25, beat: b, channel: 10 }, now);
    daemon.handle({ kind: 'note', pitch: 60 + (b % 5), velocity: 90, duration: 0.5, beat: b + 0.5, channel: 1 }, now);
  }
  await new Promise((r) => setTimeout(r, 1500));
  const notes = daemon.health().notes as number;
  await daemon.stop();
  const reader = SessionLog.open(log, { readonly: true });
  const s = reader.session('latest')!;
  reader.close();
  return { notes, scores: s.scores.length, liveScores: s.summary.settings.liveScores };
}

describe('channel 10 live', () => {
  it('is left out by default, as corpus files leave it out', async () => {
    expect((await play(false)).notes).toBe(8);
  });

  it('is heard with percussion', async () => {
    expect((await play(true)).notes).toBe(16);
  });
});

describe('live scores in the session log', () => {
  it('every scoring pass is kept, and the session says it keeps them', async () => {
    const r = await play(false);
    expect(r.scores).toBeGreaterThan(0);
    expect(r.liveScores).toBe(true);
  });
});
