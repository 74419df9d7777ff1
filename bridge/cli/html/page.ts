/**
 * The frame every earwitness HTML page shares: one self-contained document
 * (inline CSS, inline SVG, no script, nothing fetched) with the caution at
 * the top, a row of summary figures, then the page's sections. Colours are
 * the Okabe–Ito palette (Okabe & Ito 2002), readable with common
 * colour-vision deficiencies; greys are black at lower opacity.
 *
 * @example
 *   page({ title: 'session 4', heading: 'Session 4', lede: 'played …', figures: [{ label: 'notes', value: '412' }], sections: [section('Warnings', table)] })
 */
import type { MatchMode } from '../../../core/pipeline.js';
import type { PitchMode } from '../../../core/note.js';
import { CAUTION } from '../../../core/report.js';
import { COLOUR_CODE } from '../../../core/colours.js';
import { pitchWords } from '../../../core/words.js';
import type { WindowShape } from '../../../core/windows.js';

/** The colours of these pages: the one colour code (core/colours.ts), shared with the overlay. */
export const COLOUR = {
  ink: COLOUR_CODE.ink,
  score: COLOUR_CODE.rescored,
  live: COLOUR_CODE.live,
  hot: COLOUR_CODE.warning,
  threshold: COLOUR_CODE.threshold,
  matched: COLOUR_CODE.matched,
  unmatched: COLOUR_CODE.unmatched,
  baseline: COLOUR_CODE.baseline,
} as const;

const ENTITIES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

/** Escapes text for HTML and SVG, in content and in quoted attributes. */
export const esc = (s: string | number): string => String(s).replace(/[&<>"']/g, (c) => ENTITIES[c]);

export interface Figure {
  label: string;
  value: string;
  /** A line of detail under the value. */
  note?: string;
}

export interface PageContent {
  title: string;
  heading: string;
  /** One sentence under the heading saying what this page is about. */
  lede: string;
  figures: readonly Figure[];
  sections: readonly string[];
  /** Settings and provenance, small, at the end. */
  footer: string;
}

/** How the scores were made, in words: "windows of 16 beats with hop 8, chromatic pitch, exact timing". */
export function scoringText(s: WindowShape & { pitch: PitchMode }, mode: MatchMode): string {
  const timing = mode.tolerance > 0 ? `onsets within ±${mode.tolerance} beat` : 'exact timing';
  return `windows of ${s.window} beats with hop ${s.hop}, ${pitchWords(s.pitch)} pitch, ${timing}${mode.tempoFree ? ', any tempo from half to double' : ''}`;
}

export const section = (heading: string, body: string, intro?: string): string =>
  `<section><h2>${esc(heading)}</h2>${intro ? `<p class="intro">${intro}</p>` : ''}${body}</section>`;

const CSS = `
*{box-sizing:border-box}
html{background:#fff;color:#000}
body{margin:0;font:15px/1.5 system-ui,-apple-system,"Segoe UI",Roboto,"DejaVu Sans",sans-serif}
main{max-width:1040px;margin:0 auto;padding:28px 32px 56px}
header h1{font-size:28px;line-height:1.2;margin:0 0 6px;letter-spacing:-.01em}
header p{margin:0;color:rgba(0,0,0,.68)}
.caution{margin:20px 0 24px;padding:14px 18px;border:2px solid #000;border-left:12px solid ${COLOUR.ink};border-radius:6px;background:rgba(0,0,0,.05);font-weight:600}
.caution strong{display:block;font-size:12px;letter-spacing:.08em;text-transform:uppercase;margin-bottom:2px}
.figures{display:grid;grid-template-columns:repeat(auto-fit,minmax(150px,1fr));gap:12px;margin:0 0 8px}
.figure{border:1px solid rgba(0,0,0,.16);border-radius:8px;padding:10px 14px}
.figure .k{font-size:12px;letter-spacing:.06em;text-transform:uppercase;color:rgba(0,0,0,.62)}
.figure .v{font-size:26px;font-weight:700;font-variant-numeric:tabular-nums;line-height:1.25}
.figure .n{font-size:12px;color:rgba(0,0,0,.62)}
section{margin-top:36px}
h2{font-size:19px;margin:0 0 6px;padding-bottom:4px;border-bottom:1px solid rgba(0,0,0,.16)}
h3{font-size:16px;margin:0 0 8px}
.intro{margin:0 0 12px;color:rgba(0,0,0,.72)}
svg{display:block;max-width:100%;height:auto}
svg text{font-family:system-ui,-apple-system,"Segoe UI",Roboto,"DejaVu Sans",sans-serif;font-size:12px;fill:#000}
.legend{display:flex;flex-wrap:wrap;gap:6px 20px;margin:8px 0 0;padding:0;list-style:none;font-size:13px;color:rgba(0,0,0,.78)}
.legend li{display:flex;align-items:center;gap:6px}
.legend svg{display:inline-block}
table{border-collapse:collapse;width:100%;font-variant-numeric:tabular-nums}
th,td{text-align:left;padding:6px 10px;border-bottom:1px solid rgba(0,0,0,.12);vertical-align:middle}
th{font-size:12px;letter-spacing:.05em;text-transform:uppercase;color:rgba(0,0,0,.62);font-weight:600}
td.num,th.num{text-align:right}
tbody tr:nth-child(even){background:rgba(0,0,0,.025)}
.empty{color:rgba(0,0,0,.62);font-style:italic}
.pair{border:1px solid rgba(0,0,0,.16);border-radius:8px;padding:14px 16px;margin:14px 0}
.pair .rolls{display:grid;grid-template-columns:1fr 1fr;gap:18px}
.pair h4{font-size:13px;margin:0 0 4px;font-weight:600}
.where{font-size:12px;color:rgba(0,0,0,.62)}
.pair .where{margin:0 0 4px}
.rank{display:inline-block;min-width:24px;padding:0 6px;margin-right:8px;border-radius:12px;background:#000;color:#fff;text-align:center;font-size:13px}
footer{margin-top:40px;font-size:12px;color:rgba(0,0,0,.6)}
@media (max-width:760px){.pair .rolls{grid-template-columns:1fr}}
@media print{main{max-width:none}.pair{break-inside:avoid}}
`;

const figureHtml = (f: Figure): string =>
  `<div class="figure"><div class="k">${esc(f.label)}</div><div class="v">${esc(f.value)}</div>${f.note ? `<div class="n">${esc(f.note)}</div>` : ''}</div>`;

/** A whole page. Section bodies are HTML already escaped by their builders. */
export function page(c: PageContent): string {
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${esc(c.title)}</title>
<style>${CSS}</style>
</head>
<body>
<main>
<header><h1>${esc(c.heading)}</h1><p>${esc(c.lede)}</p></header>
<div class="caution" role="note"><strong>Caution</strong>${esc(CAUTION)}</div>
<div class="figures">${c.figures.map(figureHtml).join('')}</div>
${c.sections.join('\n')}
<footer>${esc(c.footer)}</footer>
</main>
</body>
</html>
`;
}
