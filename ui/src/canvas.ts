/**
 * A canvas sized to its box: the backing store follows the CSS size times
 * devicePixelRatio on every draw, so lines stay sharp on a phone, a 4K
 * screen or a zoomed browser, and drawing code works in CSS pixels.
 *
 * @example
 *   const s = surface(canvas);
 *   if (s) s.ctx.fillRect(0, 0, s.width, s.height);
 */
export interface Surface {
  ctx: CanvasRenderingContext2D;
  /** Size in CSS pixels. */
  width: number;
  height: number;
}

/** Clears the canvas for a fresh frame; null while it has no area (hidden or collapsed). */
export function surface(canvas: HTMLCanvasElement): Surface | null {
  const width = canvas.clientWidth;
  const height = canvas.clientHeight;
  const ctx = canvas.getContext('2d');
  if (!ctx || width < 1 || height < 1) return null;
  const dpr = window.devicePixelRatio || 1;
  const [w, h] = [Math.round(width * dpr), Math.round(height * dpr)];
  if (canvas.width !== w) canvas.width = w;
  if (canvas.height !== h) canvas.height = h;
  ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
  ctx.clearRect(0, 0, width, height);
  return { ctx, width, height };
}

/** Label size for a canvas: grows with the drawing, within what stays legible. */
export const labelPx = (s: Surface): number => Math.round(Math.min(16, Math.max(9, Math.min(s.height * 0.1, s.width * 0.04))));

/** The page's own font stack, so canvas labels match the text around them. */
export const labelFont = (s: Surface): string => `${labelPx(s)}px ${getComputedStyle(s.ctx.canvas).fontFamily}`;
