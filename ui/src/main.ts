/**
 * The overlay page: connects to the daemon, folds its events into the view
 * state, and draws that state at most once a frame. The timeline also
 * redraws each second so it scrolls while nothing is played.
 *
 * @example
 *   // index.html: <script type="module" src="overlay.js"></script>
 */
import './overlay.css';
import { CAUTION } from '../../core/report.js';
import { surface } from './canvas.js';
import { connect, eventsUrl } from './connection.js';
import { type HeadlineElements, headlineWords, renderHeadline } from './headline.js';
import { renderMeter } from './meter.js';
import { PALETTE, ROLE } from './palette.js';
import { drawRoll } from './pianoroll.js';
import { type Action, initialState, reduce, roll, status } from './state.js';
import { drawTimeline } from './timeline.js';

function byId<T extends HTMLElement>(id: string): T {
  const el = document.getElementById(id);
  if (!el) throw new Error(`earwitness overlay: index.html has no element with id "${id}"`);
  return el as T;
}

for (const [name, hex] of [...Object.entries(PALETTE), ...Object.entries(ROLE)]) document.documentElement.style.setProperty(`--${name}`, hex);

const page = {
  root: byId('overlay'),
  statusWords: byId('status-words'),
  midi: byId('midi'),
  toggleRoll: byId<HTMLButtonElement>('toggle-roll'),
  meter: byId('meter'),
  announce: byId('announce'),
  timeline: byId<HTMLCanvasElement>('timeline'),
  roll: byId<HTMLCanvasElement>('roll'),
  rollPanel: byId('roll-panel'),
};
const headline: HeadlineElements = {
  root: byId('headline'),
  lead: byId('match-lead'),
  title: byId('match-title'),
  where: byId('match-where'),
  dismiss: byId<HTMLButtonElement>('dismiss'),
};
byId('caution').textContent = CAUTION;

let state = initialState();
let frame = 0;
/** The warning last read out, so a redraw does not announce it again. */
let announced: number | null = null;

const schedule = (): void => {
  frame ||= requestAnimationFrame(render);
};

function dispatch(a: Action): void {
  state = reduce(state, a);
  schedule();
}

function render(): void {
  frame = 0;
  const s = state;
  const st = status(s);
  page.root.dataset.status = st.state;
  page.statusWords.textContent = st.words;

  const midi = s.hello?.midi;
  // Stale while disconnected: the daemon may come back with MIDI.
  page.midi.hidden = !midi || midi.available || s.connection !== 'open';
  page.midi.title = midi?.detail ?? '';

  renderMeter(page.meter, s.score?.score ?? null, s.hello?.preset.threshold ?? null, s.hello?.preset.warn ?? true);
  renderHeadline(headline, s);
  if (s.warning?.seq !== announced) {
    announced = s.warning?.seq ?? null;
    const w = headlineWords(s);
    page.announce.textContent = s.warning ? `${w.lead} ${w.title}. ${w.where}` : '';
  }

  page.toggleRoll.setAttribute('aria-pressed', String(s.showRoll));
  page.rollPanel.hidden = !s.showRoll;

  const t = surface(page.timeline);
  if (t) drawTimeline(t, { scores: s.scores, spans: s.spans, threshold: s.hello?.preset.threshold ?? null, now: Date.now() - s.clockOffset });
  const r = roll(s);
  const rs = s.showRoll ? surface(page.roll) : null;
  if (rs && r) drawRoll(rs, r);
}

headline.dismiss.addEventListener('click', () => {
  dispatch({ kind: 'dismiss' });
  // The button goes away with the banner; keep the keyboard user's place on the page.
  page.toggleRoll.focus();
});
page.toggleRoll.addEventListener('click', () => dispatch({ kind: 'toggle-roll' }));
new ResizeObserver(schedule).observe(page.root);
setInterval(schedule, 1000);

connect(eventsUrl(location), {
  open: () => dispatch({ kind: 'open' }),
  closed: () => dispatch({ kind: 'closed' }),
  event: (event) => dispatch({ kind: 'event', event, at: Date.now() }),
});
render();
