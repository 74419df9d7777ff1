/**
 * `POST /report`: query files in, the report document out — the very JSON
 * `earwitness report --json --corpus CORPUS FILES` prints, scored against
 * the corpus the daemon loaded (reports.ts), with the settings given as
 * query parameters (`window`, `hop`, `pitch`, `tolerance`, `min-notes`,
 * read by the CLI's own rules: report-settings.ts) and `file`, the name a
 * raw body is reported under.
 *
 * Answers, as RFC 9110 §15 means them: 200 the document; 400 a parameter
 * or a multipart body that cannot be used (naming it); 413 a body over the
 * limit (upload.ts); 415 a body that is not MIDI; 422 no file could be
 * read (each named with its reason, as `report` names a damaged file);
 * 503 too many reports waiting, or the corpus changed on disk. Every
 * answer but the document is `{ error, … }` in JSON.
 *
 * @example
 *   curl --data-binary @take-3.mid -H 'Content-Type: audio/midi' 'http://127.0.0.1:9751/report?window=16&file=take-3.mid'
 *   // → 200 { "originality": 0.82, "ci95": null, …, "caution": "A similarity score is evidence …", "mode": {…}, "skipped": [] }
 *   const answer = await reportRoute({ reports, limit })(req, url)   // → { status: 200, body: '{…}\n' }
 */
import type { IncomingMessage } from 'node:http';
import { REPORT_DEFAULTS, type ReportOptions, SETTING_RULES } from '../corpus/report-settings.js';
import { UsageError } from '../formats/user-error.js';
import { MAX_MIDI_BYTES } from '../formats/midi-file.js';
import type { ReportService } from './reports.js';
import { Refusal, readUpload } from './upload.js';

/** The body limit unless `--report-limit` says otherwise: the largest MIDI file `report` reads from disk, so any file it reads can be sent. */
export const DEFAULT_REPORT_LIMIT = MAX_MIDI_BYTES;
/** The name a raw body's file is reported under when `file` is not given. */
export const DEFAULT_UPLOAD_NAME = 'upload.mid';

/** Query parameters and the setting each one sets; `token` is the access gate's (access.ts). */
const SETTINGS = { window: 'window', hop: 'hop', pitch: 'pitch', tolerance: 'tolerance', 'min-notes': 'minNotes' } as const;
const OTHERS = ['file', 'token'];

export interface RouteAnswer {
  status: number;
  /** JSON text. */
  body: string;
  /** The body was not read to its end: the rest is to be discarded. */
  unread?: boolean;
  headers?: Record<string, string>;
}

const json = (status: number, value: Record<string, unknown>, more: Partial<RouteAnswer> = {}): RouteAnswer => ({ status, body: JSON.stringify(value, null, 2) + '\n', ...more });

/** The report's settings from the query; a Refusal (400) naming a parameter that is unknown, repeated, or has a value the CLI would refuse. */
export function reportSettings(query: URLSearchParams): ReportOptions {
  const known = [...Object.keys(SETTINGS), ...OTHERS];
  const options: ReportOptions = { ...REPORT_DEFAULTS };
  for (const key of new Set(query.keys())) {
    if (!known.includes(key)) throw new Refusal(400, `unknown parameter "${key}"; known: ${known.join(', ')}`, { parameter: key });
    if (query.getAll(key).length > 1) throw new Refusal(400, `parameter "${key}" is given ${query.getAll(key).length} times; give it once`, { parameter: key });
    if (!(key in SETTINGS)) continue;
    const setting = SETTINGS[key as keyof typeof SETTINGS];
    try {
      (options as unknown as Record<string, unknown>)[setting] = SETTING_RULES[setting](key, query.get(key)!);
    } catch (e) {
      if (e instanceof UsageError) throw new Refusal(400, e.message, { parameter: key });
      throw e;
    }
  }
  return options;
}

export function reportRoute(options: { reports: ReportService; limit: number }): (req: IncomingMessage, url: URL) => Promise<RouteAnswer> {
  return async (req, url) => {
    try {
      const settings = reportSettings(url.searchParams);
      const files = await readUpload(req, { limit: options.limit, rawName: url.searchParams.get('file') || DEFAULT_UPLOAD_NAME });
      const answer = await options.reports.run(files, settings);
      switch (answer.kind) {
        case 'document':
          return { status: 200, body: answer.text };
        case 'unreadable':
          return json(422, { error: answer.error, skipped: answer.skipped });
        case 'busy':
          return json(503, { error: answer.error }, { headers: { 'retry-after': '1' } });
        case 'unavailable':
          return json(503, { error: answer.error });
        case 'failed':
          return json(500, { error: answer.error });
      }
    } catch (e) {
      if (!(e instanceof Refusal)) throw e;
      return json(e.status, { error: e.message, ...e.details }, { unread: !req.readableEnded });
    }
  };
}
