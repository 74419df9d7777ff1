import { describe, expect, it } from 'vitest';
import { distinctTails, seriesChart } from '../../../../bridge/cli/html/charts.js';
import { esc } from '../../../../bridge/cli/html/page.js';
import { noteName } from '../../../../bridge/cli/html/piano-roll.js';
import { clock } from '../../../../bridge/cli/html/review-page.js';

describe('page pieces', () => {
  it('escapes everything a title or path could smuggle into HTML or an attribute', () => {
    expect(esc(`<b>"Kelp's" & co</b>`)).toBe('&lt;b&gt;&quot;Kelp&#39;s&quot; &amp; co&lt;/b&gt;');
  });

  it('names notes in scientific pitch, middle C (MIDI 60) as C4 (MIDI 1.0)', () => {
    expect([60, 61, 69, 21, 127, 0].map(noteName)).toEqual(['C4', 'C#4', 'A4', 'A0', 'G9', 'C-1']);
  });

  it('writes durations as a clock', () => {
    expect([0, 9.4, 75, 3600, 3725].map(clock)).toEqual(['0:00', '0:09', '1:15', '1:00:00', '1:02:05']);
  });

  it('labels folders by what differs between them', () => {
    expect(distinctTails(['runs/exp/ckpt-1', 'runs/exp/ckpt-2/'])).toEqual(['ckpt-1', 'ckpt-2/']);
    expect(distinctTails(['/tmp/a', '/srv/a'])).toEqual(['tmp/a', 'srv/a']);
    expect(distinctTails(['only/one'])).toEqual(['only/one']);
    expect(distinctTails(['a/x', 'a/x/deeper'])).toEqual(['x', 'x/deeper']);
  });

  it('draws a series point and its interval for every folder with windows, and leaves out the baseline when there is none', () => {
    const svg = seriesChart(
      [
        { folder: 'runs/ckpt-1', queries: 3, windows: 30, originality: 0.5, ci95: [0.4, 0.6] },
        { folder: 'runs/ckpt-2', queries: 1, windows: 0, originality: null, ci95: null },
        { folder: 'runs/ckpt-3', queries: 2, windows: 20, originality: 0.8, ci95: null },
      ],
      null,
    );
    expect(svg.match(/class="series-point"/g)).toHaveLength(2);
    expect(svg).toContain('runs/ckpt-1: originality 50.0%, 95% interval 40.0%–60.0%');
    expect(svg).toContain('>ckpt-2</text>');
    expect(svg).not.toContain('human baseline');
  });
});
