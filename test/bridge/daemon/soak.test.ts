/**
 * A soak: an hour of jam-like playing on an accelerated clock. Every note
 * goes as `/ew/note … beat` with its own beat position (120 BPM), sent 60×
 * faster than played, so an hour takes a minute: 32-beat sections of
 * invented melody over a walking bass, every fourth one a transposed quote
 * of a demo corpus tune (so warnings are raised and cleared all along).
 * Resident memory (/proc/PID/status VmRSS) is flat: after a warm-up (the
 * first third, while V8's heap grows to its working size), its level over
 * the last third (the median of the samples) is within 20% of its level
 * over the middle third — the garbage collector's sawtooth, some tens of
 * MB, is not growth; the log ends holding every note sent, beat for beat.
 *
 * EARWITNESS_SOAK_MINUTES=180 plays three hours instead (three minutes).
 */
import { join } from 'node:path';
import { setTimeout as sleep } from 'node:timers/promises';
import { describe, expect, it } from 'vitest';
import { loadCorpusFolder } from '../../../bridge/corpus/corpus-files.js';
import { SessionLog } from '../../../bridge/formats/session-log.js';
import { ROOT, eventually, health, melody, spawnDaemon } from '../../helpers/daemon.js';
import { noteBytes, oscSender, rssMb } from '../../helpers/proc.js';

const MINUTES = Number(process.env.EARWITNESS_SOAK_MINUTES ?? 60);
const SPEED = 60;
const BPM = 120;
const SECTION = 32;
/** Memory is not judged while the worker, the log and V8's heap settle. */
const WARM_UP = 1 / 3;

interface Played {
  beat: number;
  pitch: number;
  duration: number;
}

/** `minutes` of music at BPM, in time order. */
function session(minutes: number): Played[] {
  const corpus = loadCorpusFolder(join(ROOT, 'presets', 'demo', 'corpus')).corpus.pieces;
  const beats = minutes * BPM;
  const notes: Played[] = [];
  for (let s = 0, at = 0; at < beats; s++, at += SECTION) {
    if (s % 4 === 3) {
      const tune = corpus[(s >> 2) % corpus.length];
      const up = (s % 5) - 2;
      for (const n of tune.notes) if (n.onset < SECTION) notes.push({ beat: at + n.onset, pitch: n.pitch + up, duration: n.duration });
    } else {
      for (const n of melody(1000 + s, SECTION)) notes.push({ beat: at + n.onset, pitch: n.pitch, duration: n.duration });
      for (let b = 0; b < SECTION; b++) notes.push({ beat: at + b, pitch: 36 + ((s * 7 + b * 5) % 12), duration: 1 });
    }
  }
  return notes.filter((n) => n.beat < beats).sort((a, b) => a.beat - b.beat || a.pitch - b.pitch);
}

describe('soak', () => {
  it(`${MINUTES} minutes of playing at ${SPEED}× speed: memory flat within 20%, the log complete`, async () => {
    const notes = session(MINUTES);
    const d = await spawnDaemon(['--corpus', join(ROOT, 'presets', 'demo', 'corpus'), '--preset', 'jam', '--input', 'osc']);
    const pid = d.child.pid!;
    const sender = oscSender(d.osc);
    const curve: { s: number; mb: number }[] = [];
    const t0 = Date.now();
    let sending = true;
    const sampler = (async () => {
      while (sending) {
        curve.push({ s: (Date.now() - t0) / 1000, mb: rssMb(pid) });
        await sleep(1000);
      }
    })();
    const msPerBeat = 60_000 / BPM / SPEED;
    for (const n of notes) {
      const wait = t0 + n.beat * msPerBeat - Date.now();
      if (wait > 0) await sleep(wait);
      await sender.send(noteBytes(n.pitch, n.duration, n.beat));
    }
    const h = await eventually(() => health(d.http), (v) => v.notes === notes.length, 20_000);
    sending = false;
    await sampler;
    sender.close();
    const stopped = await d.stop('SIGINT');
    expect(stopped.code).toBe(0);

    const settled = curve.filter((c) => c.s >= curve.at(-1)!.s * WARM_UP).map((c) => c.mb);
    const [low, high] = [Math.min(...settled), Math.max(...settled)];
    const median = (xs: number[]): number => [...xs].sort((a, b) => a - b)[xs.length >> 1];
    const half = Math.floor(settled.length / 2);
    const [early, late] = [median(settled.slice(0, half)), median(settled.slice(half))];
    const every = Math.max(1, Math.round(curve.length / 12));
    console.log(
      `soak: ${MINUTES} min of music (${notes.length} notes) in ${((Date.now() - t0) / 1000).toFixed(0)} s; heard ${h.notes}; evaluations ${h.evaluations}, coalesced ${h.coalesced}; warnings ${h.warnings}; ` +
        `RSS after warm-up ${low.toFixed(0)}–${high.toFixed(0)} MB, level ${early.toFixed(0)} MB early, ${late.toFixed(0)} MB late (${(((late - early) / early) * 100).toFixed(1)}%); curve (s: MB) ${curve.filter((_, i) => i % every === 0).map((c) => `${c.s.toFixed(0)}: ${c.mb.toFixed(0)}`).join(', ')}`,
    );
    expect(h.notes).toBe(notes.length);
    expect(h.warnings).toBeGreaterThan(0);
    expect(late).toBeLessThanOrEqual(early * 1.2);
    expect(late).toBeGreaterThanOrEqual(early * 0.8);
    expect(high).toBeLessThan(1024);

    const log = SessionLog.open(d.log, { readonly: true });
    const s = log.session('latest')!;
    log.close();
    expect(s.summary.end).not.toBeNull();
    expect(s.notes.length).toBe(notes.length);
    const key = (n: { onset?: number; beat?: number; pitch: number }) => `${Math.fround(n.onset ?? n.beat!)}:${n.pitch}`;
    expect(s.notes.map(key).sort()).toEqual(notes.map((n) => key({ beat: n.beat, pitch: n.pitch })).sort());
    expect(s.warnings.length).toBe(h.warnings);
  }, (MINUTES * 60 * 1000) / SPEED + 60_000);
});
