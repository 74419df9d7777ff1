/**
 * Compressed MusicXML (.mxl): a zip archive whose META-INF/container.xml
 * names the score file (MusicXML 4.0, "MusicXML file formats"). The zip's
 * central directory is read here (PKWARE APPNOTE 6.3: end of central
 * directory record, central directory headers, local file headers); the
 * score's deflated bytes are inflated by fflate, a few kilobytes at a time,
 * and counted, so a zip bomb is refused at the limit instead of filling
 * memory: the sizes an archive declares are never trusted.
 *
 * @example
 *   mxlScore(readFileSync('song.mxl'), 'song.mxl')
 *   // → { path: 'score.musicxml', bytes: Uint8Array [...] }
 */
import { Inflate } from 'fflate';
import { ScoreFileError } from './score-piece.js';
import { children, xmlTree } from './xml-tree.js';

/** Most bytes read out of one archive, all entries together: a large orchestral score is a few megabytes. */
export const MAX_MXL_UNCOMPRESSED = 32 * 1024 * 1024;
/** Most entries an archive's directory may list. */
const MAX_ENTRIES = 10_000;
/** Compressed bytes handed to the inflater at a time: deflate expands at most about 1032:1, so one step yields at most ~4 MiB. */
const STEP = 4096;

interface Entry {
  name: string;
  method: number;
  compressedSize: number;
  localOffset: number;
}

/** APPNOTE 4.3.16: the end of central directory record, searched for from the end (it may be followed by a comment of up to 65,535 bytes). */
function endRecord(view: DataView, refuse: (why: string) => never): { entries: number; dirOffset: number } {
  for (let at = view.byteLength - 22; at >= Math.max(0, view.byteLength - 22 - 65535); at--) {
    if (view.getUint32(at, true) === 0x06054b50) return { entries: view.getUint16(at + 10, true), dirOffset: view.getUint32(at + 16, true) };
  }
  return refuse('is not a compressed MusicXML file: it is not a zip archive (no end of central directory record)');
}

/** APPNOTE 4.3.12: the central directory's file headers. */
function entries(bytes: Uint8Array, refuse: (why: string) => never): Entry[] {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const { entries: count, dirOffset } = endRecord(view, refuse);
  if (count > MAX_ENTRIES) refuse(`lists ${count} files in its zip directory, more than the ${MAX_ENTRIES} earwitness reads`);
  const out: Entry[] = [];
  let at = dirOffset;
  for (let i = 0; i < count; i++) {
    if (at + 46 > bytes.length || view.getUint32(at, true) !== 0x02014b50) refuse(`has a damaged zip directory (entry ${i + 1} of ${count} is not where the directory says)`);
    const nameLength = view.getUint16(at + 28, true);
    const name = new TextDecoder().decode(bytes.subarray(at + 46, at + 46 + nameLength));
    out.push({ name, method: view.getUint16(at + 10, true), compressedSize: view.getUint32(at + 20, true), localOffset: view.getUint32(at + 42, true) });
    at += 46 + nameLength + view.getUint16(at + 30, true) + view.getUint16(at + 32, true);
  }
  return out;
}

/** Reads one entry's bytes, refusing once `budget.left` bytes have come out. */
function extract(bytes: Uint8Array, entry: Entry, budget: { left: number }, refuse: (why: string) => never): Uint8Array {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const at = entry.localOffset;
  if (at + 30 > bytes.length || view.getUint32(at, true) !== 0x04034b50) refuse(`has a damaged zip archive (${entry.name}'s local header is missing)`);
  const start = at + 30 + view.getUint16(at + 26, true) + view.getUint16(at + 28, true);
  const data = bytes.subarray(start, Math.min(bytes.length, start + entry.compressedSize));
  const tooBig = (): never => refuse(`unpacks to more than ${MAX_MXL_UNCOMPRESSED / 1024 / 1024} MiB, the most earwitness reads from one compressed score (a zip bomb, or a score far larger than any real one)`);
  if (entry.method === 0) {
    if (data.length > budget.left) tooBig();
    budget.left -= data.length;
    return data;
  }
  if (entry.method !== 8) refuse(`compresses ${entry.name} with zip method ${entry.method}; MusicXML archives use deflate (8) or none (0)`);
  const chunks: Uint8Array[] = [];
  let ended = false;
  const inflater = new Inflate((chunk, final) => {
    if (chunk.length > budget.left) tooBig();
    budget.left -= chunk.length;
    chunks.push(chunk);
    ended ||= final;
  });
  try {
    for (let i = 0; i < data.length; i += STEP) inflater.push(data.subarray(i, i + STEP), i + STEP >= data.length);
  } catch (e) {
    if (e instanceof ScoreFileError) throw e;
    refuse(`has damaged compressed data in ${entry.name} (${(e as Error).message})`);
  }
  if (!ended) refuse(`has compressed data in ${entry.name} that is cut short`);
  return Buffer.concat(chunks);
}

/** The score file inside an .mxl archive: the first rootfile META-INF/container.xml names, else the first .musicxml/.xml outside META-INF. */
export function mxlScore(bytes: Uint8Array, file: string): { path: string; bytes: Uint8Array } {
  const refuse = (why: string): never => {
    throw new ScoreFileError(file, why);
  };
  if (bytes.length < 22) refuse('is not a compressed MusicXML file: it is too short to be a zip archive');
  const list = entries(bytes, refuse);
  const budget = { left: MAX_MXL_UNCOMPRESSED };
  const byName = new Map(list.map((e) => [e.name, e]));
  const container = byName.get('META-INF/container.xml');
  let path: string | undefined;
  if (container) {
    const root = xmlTree(new TextDecoder().decode(extract(bytes, container, budget, refuse)), `${file}: META-INF/container.xml`);
    const rootfiles = children(root, 'rootfiles').flatMap((r) => children(r, 'rootfile'));
    const score = rootfiles.find((r) => !r.attrs['media-type'] || /musicxml/i.test(r.attrs['media-type'])) ?? rootfiles[0];
    path = score?.attrs['full-path'];
  }
  path ??= list.find((e) => /\.(musicxml|xml)$/i.test(e.name) && !e.name.startsWith('META-INF/'))?.name;
  if (path === undefined) return refuse('holds no MusicXML score (no META-INF/container.xml naming one, and no .musicxml or .xml file)');
  const entry = byName.get(path) ?? refuse(`names ${path} as its score in META-INF/container.xml, but the archive holds no such file`);
  return { path, bytes: extract(bytes, entry, budget, refuse) };
}
