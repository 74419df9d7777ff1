/**
 * Where no MIDI backend can open — as on machines without ALSA's sequencer
 * (/dev/snd/seq), containers and CI among them — `listen` says so in one
 * line and carries on with OSC, and `ports` says so instead of listing.
 */
import { existsSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import type { HelloEvent } from '../../../contract/events.js';
import { CLI, ROOT, listen, spawnDaemon, writeCorpus } from '../../helpers/daemon.js';

const noAlsa = process.platform === 'linux' && !existsSync('/dev/snd/seq');

describe.skipIf(!noAlsa)('without a MIDI backend (no /dev/snd/seq here)', () => {
  it('listen prints one line saying so, tells the overlay, and listens to OSC', async () => {
    const d = await spawnDaemon(['--corpus', writeCorpus().dir, '--preset', 'jam']);
    try {
      const lines = d.stdout().split('\n').filter((l) => l.startsWith('MIDI'));
      expect(lines).toEqual(['MIDI unavailable: no ALSA sequencer (/dev/snd/seq is missing) — carrying on with OSC only']);
      expect(d.stderr()).toBe('');
      expect(d.osc).toBeGreaterThan(0);
      const events = await listen(d.http);
      const hello = (await events.next((e) => e.type === 'hello')) as HelloEvent;
      expect(hello.midi).toEqual({ available: false, detail: 'no ALSA sequencer (/dev/snd/seq is missing)' });
      events.close();
    } finally {
      expect((await d.stop()).code).toBe(0);
    }
  });

  it('ports says MIDI is unavailable and why, and exits 0', () => {
    const r = spawnSync('node', [CLI, 'ports'], { cwd: ROOT, encoding: 'utf8' });
    expect(r.status).toBe(0);
    expect(r.stdout).toBe('MIDI unavailable: no ALSA sequencer (/dev/snd/seq is missing)\n');
    expect(r.stderr).toBe('');
  });
});
