/**
 * The timeline: the last few minutes of window scores as a line, the
 * threshold as a dashed rule, and each stretch under a warning as a hatched
 * band headed by a triangle — marked by shape and pattern, not colour alone.
 *
 * @example
 *   drawTimeline(surface(canvas)!, { scores, spans, threshold: 0.75, now: Date.now() - state.clockOffset });
 */
import { type Surface, labelFont, labelPx } from './canvas.js';
import { PALETTE, ROLE, tint } from './palette.js';
import { TIMELINE_MS, type TimelinePoint, type WarningSpan } from './state.js';

export interface TimelineData {
  scores: readonly TimelinePoint[];
  spans: readonly WarningSpan[];
  threshold: number | null;
  /** Right edge, in the daemon's clock (ms). */
  now: number;
}

/** A pause longer than this breaks the line: silence is not a slope between two scores. */
const GAP_MS = 15_000;

export function drawTimeline(s: Surface, d: TimelineData): void {
  const { ctx, width, height } = s;
  const label = labelPx(s);
  const [left, right, top, bottom] = [2, width - 2, 2 + label * 0.9, height - label - 4];
  const x = (t: number): number => left + ((t - (d.now - TIMELINE_MS)) / TIMELINE_MS) * (right - left);
  const y = (score: number): number => bottom - score * (bottom - top);
  ctx.font = labelFont(s);

  // Minute rules and their labels.
  ctx.fillStyle = tint('sky', 0.8);
  ctx.strokeStyle = tint('sky', 0.22);
  ctx.lineWidth = 1;
  ctx.textBaseline = 'bottom';
  for (let m = 0; m <= TIMELINE_MS / 60_000; m++) {
    const at = x(d.now - m * 60_000);
    ctx.beginPath();
    ctx.moveTo(Math.round(at) + 0.5, top);
    ctx.lineTo(Math.round(at) + 0.5, bottom);
    ctx.stroke();
    const last = m === TIMELINE_MS / 60_000;
    ctx.textAlign = m === 0 ? 'right' : last ? 'left' : 'center';
    ctx.fillText(m === 0 ? 'now' : `−${m} min`, m === 0 ? right : last ? left : at, height - 1);
  }
  ctx.beginPath();
  ctx.moveTo(left, Math.round(bottom) + 0.5);
  ctx.lineTo(right, Math.round(bottom) + 0.5);
  ctx.stroke();

  // Warning bands: hatched, with a triangle where each began.
  for (const w of d.spans) {
    const [a, b] = [Math.max(left, x(w.start)), Math.min(right, x(w.end ?? d.now))];
    if (b < left || a > right) continue;
    ctx.save();
    ctx.beginPath();
    ctx.rect(a, top, Math.max(2, b - a), bottom - top);
    ctx.fillStyle = tint('vermillion', 0.18);
    ctx.fill();
    ctx.clip();
    ctx.strokeStyle = tint('vermillion', 0.7);
    for (let k = a - (bottom - top); k < b; k += 6) {
      ctx.beginPath();
      ctx.moveTo(k, bottom);
      ctx.lineTo(k + (bottom - top), top);
      ctx.stroke();
    }
    ctx.restore();
    if (x(w.start) >= left) triangle(ctx, x(w.start), top, label * 0.9);
  }

  if (d.threshold !== null) {
    ctx.strokeStyle = ROLE.threshold;
    ctx.setLineDash([5, 4]);
    ctx.lineWidth = 1.5;
    ctx.beginPath();
    ctx.moveTo(left, y(d.threshold));
    ctx.lineTo(right, y(d.threshold));
    ctx.stroke();
    ctx.setLineDash([]);
  }

  // The scores.
  ctx.strokeStyle = ROLE.live;
  ctx.lineWidth = 2;
  ctx.lineJoin = 'round';
  ctx.beginPath();
  let last: TimelinePoint | null = null;
  for (const p of d.scores) {
    if (x(p.time) < left) continue;
    if (last && p.time - last.time <= GAP_MS) ctx.lineTo(x(p.time), y(p.score));
    else ctx.moveTo(x(p.time), y(p.score));
    last = p;
  }
  ctx.stroke();
  if (last) {
    ctx.fillStyle = ROLE.live;
    ctx.beginPath();
    ctx.arc(x(last.time), y(last.score), 3, 0, 2 * Math.PI);
    ctx.fill();
  }
}

/** A downward-pointing warning triangle whose tip touches `y`. */
function triangle(ctx: CanvasRenderingContext2D, x: number, y: number, size: number): void {
  ctx.beginPath();
  ctx.moveTo(x, y);
  ctx.lineTo(x - size * 0.6, y - size);
  ctx.lineTo(x + size * 0.6, y - size);
  ctx.closePath();
  ctx.fillStyle = ROLE.warning;
  ctx.strokeStyle = PALETTE.black;
  ctx.lineWidth = 1;
  ctx.fill();
  ctx.stroke();
}
