/**
 * The piano roll: the notes of the last scored window, filled, laid over
 * the matched corpus excerpt, outlined. Excerpt notes the match's
 * translation lands on played notes get a solid frame around the played
 * note; the others a thin dashed frame — told apart by line, not colour.
 * The recent stretch the score judged (core/stretch.ts) lies behind them as
 * a band, with a solid line beneath when it warns on its own, dashed when not.
 *
 * @example
 *   drawRoll(surface(canvas)!, roll(state)!);
 */
import { type Surface, labelFont, labelPx } from './canvas.js';
import { PALETTE, ROLE, tint } from './palette.js';
import type { Roll } from './state.js';

/** Fewest semitones shown, so a few notes are not drawn as huge slabs. */
const MIN_SPAN = 12;

export function drawRoll(s: Surface, r: Roll): void {
  const { ctx, width, height } = s;
  const pitches = [...r.played, ...r.corpus].map((n) => n.pitch);
  if (pitches.length === 0) return;
  let [low, high] = [Math.min(...pitches) - 1, Math.max(...pitches) + 1];
  if (high - low + 1 < MIN_SPAN) {
    const grow = MIN_SPAN - (high - low + 1);
    low -= Math.floor(grow / 2);
    high += Math.ceil(grow / 2);
  }
  const label = labelPx(s);
  const [left, right, top, bottom] = [label * 2.2, width - 2, 2, height - 2];
  const row = (bottom - top) / (high - low + 1);
  const x = (beat: number): number => left + ((beat - r.start) / (r.end - r.start)) * (right - left);
  const y = (pitch: number): number => top + (high - pitch) * row;

  // Beat rules, heavier every four beats; a rule and name at each C.
  ctx.lineWidth = 1;
  for (let b = Math.ceil(r.start); b < r.end; b++) {
    ctx.strokeStyle = tint('sky', b % 4 === 0 ? 0.3 : 0.12);
    ctx.beginPath();
    ctx.moveTo(Math.round(x(b)) + 0.5, top);
    ctx.lineTo(Math.round(x(b)) + 0.5, bottom);
    ctx.stroke();
  }
  ctx.font = labelFont(s);
  ctx.textAlign = 'left';
  ctx.textBaseline = 'middle';
  for (let p = low; p <= high; p++) {
    if (p % 12 !== 0) continue;
    ctx.strokeStyle = tint('sky', 0.22);
    ctx.beginPath();
    ctx.moveTo(left, Math.round(y(p) + row) + 0.5);
    ctx.lineTo(right, Math.round(y(p) + row) + 0.5);
    ctx.stroke();
    ctx.fillStyle = tint('sky', 0.8);
    ctx.fillText(`C${p / 12 - 1}`, 0, y(p) + row / 2);
  }

  // The recent stretch judged: a band behind its notes, bordered below; solid when it warns on its own.
  if (r.stretch) {
    const [sx, ex] = [x(r.stretch.start), Math.max(x(r.stretch.start) + 2, x(r.stretch.end + 0.25))];
    ctx.fillStyle = tint('orange', r.stretch.hot ? 0.22 : 0.1);
    ctx.fillRect(sx, top, ex - sx, bottom - top);
    ctx.strokeStyle = PALETTE.orange;
    ctx.lineWidth = 2;
    ctx.setLineDash(r.stretch.hot ? [] : [4, 3]);
    ctx.beginPath();
    ctx.moveTo(sx, bottom - 1);
    ctx.lineTo(ex, bottom - 1);
    ctx.stroke();
    ctx.setLineDash([]);
  }

  const h = Math.max(2, row - 1);
  ctx.fillStyle = PALETTE.sky;
  for (const n of r.played) {
    ctx.fillRect(x(n.onset), y(n.pitch) + (row - h) / 2, Math.max(2, x(n.onset + n.duration) - x(n.onset) - 1), h);
  }
  for (const n of r.corpus) {
    const [nx, ny, nw] = [x(n.onset), y(n.pitch) + (row - h) / 2, Math.max(3, x(n.onset + n.duration) - x(n.onset) - 1)];
    if (n.matched) {
      ctx.strokeStyle = ROLE.matched;
      ctx.lineWidth = 1.5;
      ctx.setLineDash([]);
      ctx.strokeRect(nx - 1.25, ny - 1.25, nw + 2.5, h + 2.5);
    } else {
      ctx.strokeStyle = ROLE.unmatched;
      ctx.lineWidth = 1;
      ctx.setLineDash([3, 2]);
      ctx.strokeRect(nx + 0.5, ny + 0.5, nw - 1, h - 1);
    }
  }
  ctx.setLineDash([]);
}
