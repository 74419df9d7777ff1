/**
 * `earwitness corpus build DIR`: reads every score file (MIDI, MusicXML,
 * ABC) under DIR in worker threads and writes the corpus index (bridge/formats/index-file.ts). A rebuild
 * reuses each file whose size and mtime, or failing those its content hash,
 * are unchanged, and re-reads only the rest. A file that cannot be read, or
 * takes longer than --file-seconds, is listed with its reason, never fatal.
 * A tune book's tunes are pieces of one file: reused or re-read together.
 *
 * @example
 *   earwitness corpus build songs --json
 *   // → { "pieces": 120, "notes": 81234, "skipped": [], "out": "songs/.earwitness-index", "seconds": 3.1, "reparsed": 120, "reused": 0,
 *   //     "formats": { "midi": { "files": 100, "pieces": 100, "skipped": 0 }, "musicxml": { … }, "abc": { "files": 2, "pieces": 18, "skipped": 0 } }, … }
 */
import { existsSync, statSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { basename, join, relative, resolve, sep } from 'node:path';
import { Worker } from 'node:worker_threads';
import type { Command } from 'commander';
import { type FlatNotes, joinNotes } from '../../../core/flat-notes.js';
import { EXACT_MODE } from '../../../core/pipeline.js';
import { PITCH_MODES } from '../../../core/note.js';
import { walkCorpus } from '../../corpus/corpus-files.js';
import { type ScoreFormat, FORMAT_NAMES, SCORE_FORMATS, formatOf } from '../../formats/read-file.js';
import { type FileFingerprint, type IndexContents, type PieceInfo, INDEX_NAME, IndexFileError, readIndexFile, writeIndexFile } from '../../formats/index-file.js';
import { type ParseTask, type ParsedFile, fileHash } from '../../corpus/build-worker.js';
import { type ShardsSummary, writeShards } from '../../corpus/shard-build.js';
import { IndexBuilder } from '../../formats/index-build.js';
import { MANIFEST_NAME } from '../../formats/shard-manifest.js';
import { printJson } from '../options.js';
import { type Baseline, CAUTION, humanBaseline } from '../../../core/report.js';
import { openCorpusTold } from '../notices.js';
import { BUILT_IN_PRESETS, loadPreset } from '../../formats/presets.js';
import { type ProgressFn, progressBar } from '../progress.js';
import { exposeCollector } from '../../daemon/idle-collect.js';
import { UsageError, positive, wholeNumber } from '../../formats/user-error.js';

/** "8,16" → [8, 16]: positive beat counts. */
function beatList(v: string): number[] {
  const parts = v.split(',').map((s) => s.trim());
  const wrong = parts.find((s) => !(s !== '' && Number.isFinite(Number(s)) && Number(s) > 0));
  if (wrong !== undefined) throw new UsageError(`--baseline-windows ${v}: "${wrong}" is not a positive number of beats; give lengths separated by commas, as in 8,16`);
  return parts.map(Number);
}

export interface BuildSummary {
  pieces: number;
  notes: number;
  skipped: { file: string; error: string }[];
  out: string;
  seconds: number;
  /** Files read this time. */
  reparsed: number;
  /** Files taken unchanged from the previous index. */
  reused: number;
  /** Per format: files found, pieces indexed from them, files skipped whole. */
  formats: Record<ScoreFormat, FormatCount>;
  /** With --baseline: each stored baseline's window and p99 window score (what a preset threshold "auto" becomes). */
  baselines: { window: number; p99: number }[];
}

export interface FormatCount {
  files: number;
  pieces: number;
  skipped: number;
}

export interface BaselineRequest {
  /** Window lengths to store a baseline for, beats. */
  windows: number[];
  samples: number;
}

/** The windows and recent stretch lengths of the built-in presets: what "auto" thresholds need unless told otherwise. */
export const presetWindows = (): number[] => [...new Set(BUILT_IN_PRESETS.flatMap((name) => [loadPreset(name).window, ...loadPreset(name).earlyBeats]))].sort((a, b) => a - b);

/**
 * Human baselines of a freshly written index, exact mode, chromatic pitch, hop half a window: the scores
 * the live presets compare with (with a tolerance the scores of quantised corpus pieces barely change; test/bench/RESULTS.md).
 */
function baselinesOf(out: string, percussion: boolean, request: BaselineRequest): Baseline[] {
  const opened = openCorpusTold(out, { percussion, pitch: 'chromatic' });
  const view = opened.view('chromatic');
  const bar = progressBar('baseline');
  const made = request.windows.map((window, i) => {
    const b = humanBaseline(view, opened.matcher({ pitch: 'chromatic', window, mode: EXACT_MODE }), { window, hop: window / 2, samples: request.samples, seed: 1 });
    bar.tick(i + 1, request.windows.length);
    return b;
  });
  bar.stop();
  return made;
}

const portable = (p: string): string => p.split(sep).join('/');

/** Reads files in a pool of worker threads, handing each result to `got` as it comes; a worker that overruns `limitMs` on a file is ended and replaced. */
async function parseAll(tasks: ParseTask[], limitMs: number, got: (i: number, r: ParsedFile) => void, progress: ProgressFn): Promise<void> {
  const url = new URL('../../corpus/build-worker.js', import.meta.url);
  // The readers collect their garbage every so often (build-worker.ts).
  exposeCollector();
  let next = 0;
  let done = 0;
  const runOne = (worker: Worker, task: ParseTask): Promise<ParsedFile | string> =>
    new Promise((resolve) => {
      const timer = setTimeout(() => finish(`took longer than ${limitMs / 1000} s to read, so it was stopped`), limitMs);
      const finish = (r: ParsedFile | string): void => {
        clearTimeout(timer);
        worker.removeAllListeners('message').removeAllListeners('error');
        resolve(r);
      };
      worker.once('message', finish);
      worker.once('error', (e) => finish(`made its reader fail (${e.message})`));
      worker.postMessage(task);
    });
  const lane = async (): Promise<void> => {
    let worker = new Worker(url);
    try {
      while (next < tasks.length) {
        const i = next++;
        const r = await runOne(worker, tasks[i]);
        if (typeof r === 'string') {
          await worker.terminate();
          worker = new Worker(url);
          got(i, { file: tasks[i].file, sha256: fileHash(tasks[i].file), pieces: [], notes: null, skipped: [], error: r });
        } else got(i, r);
        progress(++done, tasks.length);
      }
    } finally {
      await worker.terminate();
    }
  };
  await Promise.all(Array.from({ length: Math.min(availableParallelism(), tasks.length) }, lane));
}

/**
 * The previous index's pieces by the file they came from: a piece is known by
 * its file's path, or by that path and `#id` for one of a tune book's tunes.
 */
function piecesByFile(index: IndexContents | null): Map<string, number[]> {
  const byFile = new Map<string, number[]>(index?.files.map((f) => [f.path, []]) ?? []);
  index?.pieces.forEach((p, i) => (byFile.get(p.path) ?? byFile.get(p.path.slice(0, p.path.lastIndexOf('#'))))?.push(i));
  return byFile;
}

/** The previous index, or null when there is none or it cannot be used (then every file is read). */
function previous(out: string): IndexContents | null {
  if (!existsSync(out)) return null;
  try {
    return readIndexFile(out, []);
  } catch (e) {
    if (!(e instanceof IndexFileError)) throw e;
    process.stderr.write(`earwitness: not reusing ${out} (${e.reason}); reading every file\n`);
    return null;
  }
}

/** What reading a corpus folder found, besides the pieces handed on: every file seen, and what was skipped. */
interface Gathered {
  pieces: number;
  notes: number;
  files: FileFingerprint[];
  skipped: { file: string; error: string }[];
  formats: Record<ScoreFormat, FormatCount>;
  reparsed: number;
  reused: number;
}

/** Where gathered pieces go, in the corpus's order (a file's pieces together, files in the order walked). */
type PieceSink = (pieces: PieceInfo[], notes: FlatNotes) => void;

/**
 * Reads every score file under `dir`, taking unchanged files' pieces from
 * `reusable` (a previous index, or null), and hands the pieces to `sink` in
 * the corpus's order as soon as each file's turn comes: a file read early
 * waits only for those before it.
 */
async function gather(dir: string, reusable: IndexContents | null, options: { percussion: boolean; fileSeconds: number }, sink: PieceSink): Promise<Gathered> {
  const { percussion } = options;
  const oldFiles = new Map(reusable?.files.map((f) => [f.path, f]) ?? []);
  const oldPieces = piecesByFile(reusable);

  type Slot = { path: string; size: number; mtimeMs: number; reuse: FileFingerprint | null; task: number };
  const walked = walkCorpus(dir);
  let tasksMade = 0;
  const slots: Slot[] = walked.files.map((file) => {
    const path = portable(relative(dir, file));
    const { size, mtimeMs } = statSync(file);
    const was = oldFiles.get(path);
    const same = !!was && was.size === size && (was.mtimeMs === mtimeMs || (was.sha256 !== null && was.sha256 === fileHash(file)));
    return { path, size, mtimeMs, reuse: same ? was : null, task: same ? -1 : tasksMade++ };
  });
  const tasks = slots.filter((s) => !s.reuse).map((s): ParseTask => ({ file: join(dir, s.path), root: dir, percussion }));

  const got: Gathered = { pieces: 0, notes: 0, files: [], skipped: [...walked.skipped], formats: Object.fromEntries(SCORE_FORMATS.map((f) => [f, { files: 0, pieces: 0, skipped: 0 }])) as Record<ScoreFormat, FormatCount>, reparsed: tasks.length, reused: slots.length - tasks.length };
  const hand = (pieces: PieceInfo[], notes: FlatNotes): void => {
    sink(pieces, notes);
    got.pieces += pieces.length;
    got.notes += notes.at.length;
  };
  /** Files read and not yet handed on, by task. */
  const waiting = new Map<number, ParsedFile>();
  let nextSlot = 0;
  const handReady = (): void => {
    for (; nextSlot < slots.length; nextSlot++) {
      const s = slots[nextSlot];
      const fresh = s.reuse ? null : waiting.get(s.task);
      if (!s.reuse && !fresh) return;
      waiting.delete(s.task);
      const error = fresh ? fresh.error : s.reuse!.error;
      const count = got.formats[formatOf(s.path)!];
      count.files++;
      got.files.push({ path: s.path, size: s.size, mtimeMs: s.mtimeMs, sha256: fresh ? fresh.sha256 : s.reuse!.sha256, error });
      if (error !== null) {
        got.skipped.push({ file: s.path, error });
        count.skipped++;
      } else if (fresh) {
        hand(fresh.pieces, fresh.notes!);
        got.skipped.push(...fresh.skipped);
        count.pieces += fresh.pieces.length;
      } else {
        const reused = oldPieces.get(s.path) ?? [];
        if (reused.length) hand(reused.map((i) => reusable!.pieces[i]), joinNotes(reused.map((piece) => ({ notes: reusable!.notes, piece }))));
        count.pieces += reused.length;
      }
    }
  };
  handReady();
  const bar = progressBar('indexing');
  await parseAll(tasks, options.fileSeconds * 1000, (i, r) => {
    waiting.set(i, r);
    handReady();
  }, bar.tick);
  bar.stop();
  if (got.pieces === 0) {
    for (const s of got.skipped) process.stderr.write(`earwitness: skipped ${s.file}: ${s.error}\n`);
    throw new UsageError(`corpus build ${dir}: no readable score file (MIDI, MusicXML or ABC) with notes under it${got.skipped.length ? ` (${got.skipped.length} skipped)` : ''}`);
  }
  return got;
}

const checkFolder = (dir: string): void => {
  if (!existsSync(dir) || !statSync(dir).isDirectory()) throw new UsageError(`corpus build ${dir}: no such folder`);
};

const secondsSince = (began: number): number => Math.round((performance.now() - began) / 10) / 100;

export async function buildCorpusIndex(dir: string, options: { out?: string; percussion?: boolean; fileSeconds: number; baseline?: BaselineRequest }): Promise<BuildSummary> {
  const began = performance.now();
  checkFolder(dir);
  const out = options.out ?? join(dir, INDEX_NAME);
  const percussion = options.percussion ?? false;
  const old = previous(out);
  const builder = new IndexBuilder(out, { percussion });
  for (const stale of builder.staleRemoved) process.stderr.write(`earwitness: removed ${stale}, the spill files of a build that was stopped\n`);
  // Stopped, the build removes its spill files and the part of the index written (killed outright, the next build beside it removes them).
  const stop = (signal: NodeJS.Signals): void => {
    builder.abort();
    process.stderr.write(`earwitness: corpus build stopped by ${signal}; the index was not changed\n`);
    // The shell's code for a process ended by a signal: 128 + its number.
    process.exit(signal === 'SIGINT' ? 130 : 143);
  };
  process.once('SIGINT', stop).once('SIGTERM', stop);
  let got: Gathered;
  try {
    got = await gather(dir, old && old.percussion === percussion ? old : null, { percussion, fileSeconds: options.fileSeconds }, (pieces, notes) => builder.add(pieces, notes));
    const bar = progressBar('writing');
    await builder.finish({ files: got.files }, bar.tick);
    bar.stop();
  } catch (e) {
    builder.abort();
    throw e;
  } finally {
    process.off('SIGINT', stop).off('SIGTERM', stop);
  }
  const baselines = options.baseline ? baselinesOf(out, percussion, options.baseline) : [];
  // Written again with the baselines, from the file just written: read back, not built again.
  if (baselines.length) writeIndexFile(out, { ...readIndexFile(out, PITCH_MODES), baselines });
  return {
    pieces: got.pieces,
    notes: got.notes,
    skipped: got.skipped,
    out,
    seconds: secondsSince(began),
    reparsed: got.reparsed,
    reused: got.reused,
    formats: got.formats,
    baselines: baselines.map((b) => ({ window: b.settings.window, p99: b.percentiles.p99 })),
  };
}

/** What `corpus build --shards --json` prints. */
export interface ShardsBuilt extends ShardsSummary {
  pieces: number;
  notes: number;
  skipped: { file: string; error: string }[];
  seconds: number;
}

/** `corpus build DIR --shards K`: every file read (a sharded build reuses nothing), K index files and their manifest written. */
export async function buildCorpusShards(dir: string, options: { out?: string; percussion?: boolean; fileSeconds: number; shards: number }): Promise<ShardsBuilt> {
  const began = performance.now();
  checkFolder(dir);
  const percussion = options.percussion ?? false;
  // Shards of similar note counts need every piece's count first: the pieces are gathered in memory.
  const parts: { pieces: PieceInfo[]; notes: FlatNotes }[] = [];
  const got = await gather(dir, null, { percussion, fileSeconds: options.fileSeconds }, (pieces, notes) => parts.push({ pieces, notes }));
  if (options.shards > got.pieces) throw new UsageError(`--shards ${options.shards}: the corpus has only ${got.pieces} pieces; give at most that many shards`);
  const notes = joinNotes(parts.flatMap((part) => part.pieces.map((_, piece) => ({ notes: part.notes, piece }))));
  const written = await writeShards({ manifest: options.out ?? join(dir, MANIFEST_NAME), name: basename(resolve(dir)), shards: options.shards, notes, pieces: parts.flatMap((part) => part.pieces), files: got.files, percussion });
  return { ...written, pieces: got.pieces, notes: got.notes, skipped: got.skipped, seconds: secondsSince(began) };
}

const plural = (n: number, one: string, many = `${one}s`): string => `${n} ${n === 1 ? one : many}`;

/** "2 MIDI files (2 pieces), 1 ABC file (12 tunes, 1 skipped)": the formats found. */
export function formatLine(formats: Record<ScoreFormat, FormatCount>): string {
  const found = SCORE_FORMATS.filter((f) => formats[f].files > 0).map((f) => {
    const c = formats[f];
    const what = [plural(c.pieces, f === 'abc' ? 'tune' : 'piece'), ...(c.skipped ? [`${c.skipped} skipped`] : [])].join(', ');
    return `${plural(c.files, `${FORMAT_NAMES[f]} file`)} (${what})`;
  });
  return `by format: ${found.join(', ')}`;
}

async function buildShardsCommand(dir: string, o: { out?: string; percussion?: boolean; fileSeconds: number; json?: boolean; baseline?: boolean; shards: number }): Promise<void> {
  if (o.shards < 1) throw new UsageError('--shards must be at least 1');
  if (o.baseline) throw new UsageError('--baseline and --shards do not go together yet: build the shards, then run "earwitness baseline --corpus MANIFEST"');
  const r = await buildCorpusShards(dir, { ...o, shards: o.shards });
  if (o.json) return printJson(r);
  const lines = [`indexed ${r.pieces} pieces (${r.notes} notes) into ${r.shards.length} shards in ${r.seconds} s; manifest ${r.manifest}`];
  for (const s of r.shards) lines.push(`  ${s.path}: ${s.pieces} pieces, ${s.notes} notes`);
  for (const s of r.skipped) lines.push(`  skipped ${s.file}: ${s.error}`);
  process.stdout.write(lines.join('\n') + '\n');
}

export function registerCorpus(cli: Command): void {
  cli
    .command('corpus')
    .description('the corpus index, for fast matching on large corpora')
    .command('build')
    .description(`index every MIDI (.mid, .midi), MusicXML (.musicxml, .xml, .mxl) and ABC (.abc) file under a folder (a rebuild re-reads only changed files); --corpus then takes the folder or the index file`)
    .argument('<dir>', 'corpus folder')
    .option('--out <file>', `index file to write (default: DIR/${INDEX_NAME})`)
    .option('--percussion', 'keep channel 10 (percussion)')
    .option('--file-seconds <s>', 'longest a single file may take to read before it is skipped', positive('--file-seconds'), 60)
    .option('--baseline', 'also store the human baseline, so a preset threshold "auto" means its p99 window score')
    .option('--baseline-windows <beats,...>', 'window lengths to store baselines for (default: those of the built-in presets)', beatList)
    .option('--baseline-samples <n>', 'pieces sampled for each baseline', wholeNumber('--baseline-samples'), 50)
    .option('--shards <k>', `write K index files of similar note counts and a manifest naming them (--out: the manifest, default DIR/${MANIFEST_NAME}); --corpus then takes the manifest`, wholeNumber('--shards'))
    .option('--json', 'print JSON')
    .action(async (dir: string, o: { out?: string; percussion?: boolean; fileSeconds: number; json?: boolean; baseline?: boolean; baselineWindows?: number[]; baselineSamples: number; shards?: number }) => {
      if (o.baselineSamples < 1) throw new UsageError('--baseline-samples must be at least 1');
      if (o.shards !== undefined) return buildShardsCommand(dir, { ...o, shards: o.shards });
      const baseline = o.baseline ? { windows: o.baselineWindows ?? presetWindows(), samples: o.baselineSamples } : undefined;
      const r = await buildCorpusIndex(dir, { ...o, baseline });
      if (o.json) return printJson(r.baselines.length ? { ...r, caution: CAUTION } : r);
      const lines = [`indexed ${r.pieces} pieces (${r.notes} notes) into ${r.out} in ${r.seconds} s: ${r.reparsed} files read, ${r.reused} unchanged`, `  ${formatLine(r.formats)}`];
      for (const s of r.skipped) lines.push(`  skipped ${s.file}: ${s.error}`);
      for (const b of r.baselines) lines.push(`  human baseline of ${b.window}-beat windows stored: p99 window score ${b.p99.toFixed(3)} (a preset threshold "auto")`);
      if (r.baselines.length) lines.push('', CAUTION);
      process.stdout.write(lines.join('\n') + '\n');
    });
}
