/**
 * The meter: the last window's similarity as a bar, with the warning
 * threshold standing on it as a notch. Past the threshold the bar changes
 * pattern as well as colour (stripes), so the change reads without colour.
 *
 * @example
 *   renderMeter(document.getElementById('meter')!, 0.62, 0.75, true);
 *   // bar at 62 %, notch at 75 % labelled "warns at 75%", "62% now" written above it
 */
import { percent } from './state.js';

/** `warn`: whether the daemon raises warnings at the threshold (a recording preset only scores). */
export function renderMeter(meter: HTMLElement, score: number | null, threshold: number | null, warn: boolean): void {
  const value = meter.querySelector<HTMLElement>('.meter-value')!;
  const mark = meter.querySelector<HTMLElement>('.meter-mark')!;
  const markLabel = meter.querySelector<HTMLElement>('.meter-mark-label')!;
  meter.style.setProperty('--score', String(score ?? 0));
  meter.classList.toggle('over', score !== null && threshold !== null && score >= threshold);
  // "now": the window just played, told apart from the score a standing warning was raised at (headline.ts).
  value.textContent = score === null ? '—' : `${percent(score)} now`;
  meter.setAttribute('aria-valuenow', String(Math.round((score ?? 0) * 100)));
  const words = score === null ? 'no score yet' : percent(score);
  if (threshold === null) {
    mark.hidden = true;
    meter.setAttribute('aria-valuetext', words);
    return;
  }
  mark.hidden = false;
  meter.style.setProperty('--threshold', String(threshold));
  const markWords = warn ? `warns at ${percent(threshold)}` : `threshold ${percent(threshold)}, warnings off`;
  markLabel.textContent = markWords;
  meter.setAttribute('aria-valuetext', `${words}; ${markWords}`);
}
