/**
 * The MusicXML and ABC readers on hostile text (fast-check, 10,000 inputs a
 * property): valid scores and tune books with characters set, inserted,
 * deleted and cut, and strings built from the formats' own words. Every
 * input either reads, giving notes a corpus can hold, or is refused with a
 * ScoreFileError naming the file — never another exception, never a hang
 * (each input is timed), and the heap stays bounded.
 *
 * Pinned: an XML file whose DTD expands entities a billion times (the
 * "billion laughs"), or names an outside file as an entity, is refused
 * before anything is expanded; a zip bomb .mxl (100 MiB of zeros deflated
 * to about 100 KiB) is refused at the unpacking limit, whatever sizes the
 * archive declares; repeats that would write out billions of bars are refused;
 * ABC that would make abcjs end the process is refused tune by tune.
 *
 * @example
 *   npx vitest run test/bridge/formats/fuzz.test.ts
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { zipSync } from 'fflate';
import { afterAll, describe, expect, it } from 'vitest';
import { parseAbc } from '../../../bridge/formats/abc.js';
import { MAX_MXL_UNCOMPRESSED, mxlScore } from '../../../bridge/formats/mxl.js';
import { parseMusicXml } from '../../../bridge/formats/musicxml.js';
import { readScoreFile } from '../../../bridge/formats/read-file.js';
import { type ScorePiece, ScoreFileError } from '../../../bridge/formats/score-piece.js';
import { type XmlElement, xmlTree } from '../../../bridge/formats/xml-tree.js';
import { TUNE_BOOK } from './abc-tunes.js';

const RUNS = 10_000;
/**
 * The inputs are drawn from a fixed seed unless EARWITNESS_FUZZ_SEED says
 * another number or "random": abcjs, a library, has slow or fatal paths
 * beyond those refused below, and a run of the suite must not turn on luck.
 * Look for more by hand with random seeds; each failure prints its seed.
 */
const SEED = process.env.EARWITNESS_FUZZ_SEED === 'random' ? Date.now() ^ (Math.random() * 2 ** 31) : Number(process.env.EARWITNESS_FUZZ_SEED ?? 20261202);
if (!Number.isInteger(SEED)) throw new Error(`EARWITNESS_FUZZ_SEED must be a whole number or "random", got ${process.env.EARWITNESS_FUZZ_SEED}`);
/** Generous: inputs here read in a few ms; a hang is what this catches. */
const SLOWEST_MS = 5_000;
/** Heap growth allowed over a whole property: a reader that kept what it read, or expanded an input a thousandfold, passes it. */
const HEAP_GROWTH = 512 * 1024 * 1024;
const dir = mkdtempSync(join(tmpdir(), 'ew-format-fuzz-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const SEED_XML = `<?xml version="1.0" encoding="UTF-8"?>
<score-partwise version="4.0"><work><work-title>Buoy Song</work-title></work>
<part-list><score-part id="P1"><part-name>A</part-name></score-part><score-part id="P2"><part-name>B</part-name><midi-instrument id="I"><midi-channel>3</midi-channel></midi-instrument></score-part></part-list>
<part id="P1">
<measure number="0" implicit="yes"><attributes><divisions>2</divisions><key><fifths>-1</fifths><mode>minor</mode></key><time><beats>3</beats><beat-type>4</beat-type></time><transpose><diatonic>-1</diatonic><chromatic>-2</chromatic></transpose></attributes>
<note><pitch><step>A</step><octave>4</octave></pitch><duration>2</duration><voice>1</voice></note></measure>
<measure number="1"><barline location="left"><repeat direction="forward"/></barline>
<note><pitch><step>D</step><octave>5</octave></pitch><duration>2</duration><tie type="start"/></note>
<note><chord/><pitch><step>F</step><alter>1</alter><octave>5</octave></pitch><duration>2</duration></note>
<note><grace/><pitch><step>E</step><octave>5</octave></pitch></note>
<note><pitch><step>C</step><octave>5</octave></pitch><duration>4</duration><time-modification><actual-notes>3</actual-notes><normal-notes>2</normal-notes></time-modification></note>
<backup><duration>6</duration></backup><forward><duration>2</duration></forward>
<note><pitch><step>G</step><octave>3</octave></pitch><duration>4</duration><voice>2</voice></note>
<barline location="right"><ending number="1" type="start"/></barline></measure>
<measure number="2"><barline location="left"><ending number="1" type="start"/></barline>
<note><pitch><step>D</step><octave>5</octave></pitch><duration>6</duration><tie type="stop"/></note>
<barline location="right"><ending number="1" type="stop"/><repeat direction="backward" times="2"/></barline></measure>
<measure number="3"><barline location="left"><ending number="2" type="start"/></barline><direction><sound dynamics="110"/></direction>
<note dynamics="50"><pitch><step>B</step><alter>-1</alter><octave>4</octave></pitch><duration>6</duration></note>
<note><rest/><duration>2</duration></note><note><cue/><pitch><step>C</step><octave>4</octave></pitch><duration>2</duration></note>
<barline location="right"><ending number="2" type="discontinue"/></barline></measure>
</part>
<part id="P2"><measure number="0"><attributes><divisions>1</divisions></attributes><note><rest/><duration>1</duration></note></measure>
<measure number="1"><note><pitch><step>C</step><octave>3</octave></pitch><duration>3</duration></note></measure>
<measure number="2"><note><pitch><step>F</step><octave>2</octave></pitch><duration>3</duration></note></measure>
<measure number="3"><note><pitch><step>B</step><alter>-1</alter><octave>2</octave></pitch><duration>3</duration></note></measure></part>
</score-partwise>
`;

/** Words and marks of each format, for strings built from them. */
const XML_WORDS = ['<score-partwise>', '</score-partwise>', '<part id="P1">', '</part>', '<measure>', '</measure>', '<attributes>', '</attributes>', '<divisions>', '</divisions>', '<note>', '</note>', '<pitch>', '</pitch>', '<step>', '</step>', '<octave>', '</octave>', '<alter>', '</alter>', '<duration>', '</duration>', '<chord/>', '<grace/>', '<rest/>', '<tie type="start"/>', '<tie type="stop"/>', '<backup>', '</backup>', '<forward>', '</forward>', '<barline>', '</barline>', '<repeat direction="backward" times="9"/>', '<repeat direction="forward"/>', '<ending number="1, 2" type="start"/>', '<transpose>', '</transpose>', '<chromatic>', '</chromatic>', '<diatonic>', '</diatonic>', 'C', 'G', '4', '-3', '0', '1e9', 'NaN', '&amp;', '&#x41;', '<!-- -->', '<![CDATA[x]]>', '<', '>', '"', '&'];
const ABC_WORDS = ['X:1\n', 'T:T\n', 'M:6/8\n', 'M:C|\n', 'L:1/16\n', 'K:Bb\n', 'K:Ddor\n', 'K:C clef=bass\n', 'K:G transpose=-3\n', 'V:1\n', 'V:2 clef=treble-8\n', 'Q:1/4=90\n', '%%MIDI transpose 2\n', '%%MIDI program 3\n', '\n\n', '|:', ':|', '|1', ':|2', '[1', '[2', '::', '||', '|]', '|', '(3', '(5:4:5', '>', '<', '-', '[CEG]', '{ag}', '"Am"', '!f!', '!trill!', 'z', 'Z4', 'x', 'A', 'b', "c'", 'D,', '^F', '_B', '=E', '^^C', '2', '/', '3/2', '999999', '[K:A]', '[M:5/4]', '&', 'w:la la\n', '%'];

const mutation = fc.oneof(
  { arbitrary: fc.record({ kind: fc.constant('set' as const), at: fc.noBias(fc.nat()), text: fc.string({ maxLength: 3 }) }), weight: 4 },
  { arbitrary: fc.record({ kind: fc.constant('insert' as const), at: fc.noBias(fc.nat()), text: fc.string({ maxLength: 12 }) }), weight: 4 },
  { arbitrary: fc.record({ kind: fc.constant('delete' as const), at: fc.noBias(fc.nat()), length: fc.integer({ min: 1, max: 12 }) }), weight: 4 },
  // Rarer: a cut or two leaves little of a seed.
  { arbitrary: fc.record({ kind: fc.constant('cut' as const), at: fc.noBias(fc.nat()) }), weight: 1 },
);
type Mutation = typeof mutation extends fc.Arbitrary<infer M> ? M : never;

function mutate(seed: string, mutations: Mutation[]): string {
  let s = seed;
  for (const m of mutations) {
    const at = s.length ? m.at % s.length : 0;
    if (m.kind === 'set') s = s.slice(0, at) + m.text + s.slice(at + 1);
    else if (m.kind === 'insert') s = s.slice(0, at) + m.text + s.slice(at);
    else if (m.kind === 'delete') s = s.slice(0, at) + s.slice(at + m.length);
    else s = s.slice(0, at);
  }
  return s;
}

const mutated = (seed: string) => fc.array(mutation, { minLength: 1, maxLength: 6 }).map((ms) => mutate(seed, ms));
/** Strings of a format's words and any characters. */
const wordy = (words: string[]) => fc.array(fc.oneof(fc.constantFrom(...words), fc.string({ maxLength: 4 })), { maxLength: 40 }).map((w) => w.join(''));

/** Values MusicXML's elements and attributes hold, and ones they must not. */
const VALUES = ['', '0', '1', '2', '3', '-1', '-7', '12', '2.5', '1e9', '-1e9', 'NaN', 'C', 'F', 'H', 'constructor', 'yes', 'no', 'start', 'stop', 'discontinue', 'forward', 'backward', 'minor', '1, 2', '3+2', '<&>'];
const NAMES = ['note', 'chord', 'grace', 'cue', 'rest', 'pitch', 'step', 'alter', 'octave', 'duration', 'backup', 'forward', 'attributes', 'divisions', 'time', 'beats', 'beat-type', 'key', 'fifths', 'mode', 'transpose', 'chromatic', 'diatonic', 'octave-change', 'double', 'barline', 'repeat', 'ending', 'tie', 'tied', 'measure', 'part', 'sound', 'direction', 'midi-channel'];
const ATTRS = ['number', 'type', 'direction', 'times', 'implicit', 'dynamics', 'location', 'id', 'above', 'full-path'];

const escape = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
const serialize = (el: XmlElement): string =>
  `<${el.name}${Object.entries(el.attrs).map(([k, v]) => ` ${k}="${escape(v)}"`).join('')}>${escape(el.text)}${el.children.map(serialize).join('')}</${el.name}>`;
const clone = (el: XmlElement): XmlElement => ({ ...el, attrs: { ...el.attrs }, children: el.children.map(clone) });
const nodes = (el: XmlElement): XmlElement[] => [el, ...el.children.flatMap(nodes)];

/** Changes to a score's elements that keep it well-formed XML: values, attributes, elements removed, doubled, moved, added. */
const edit = fc.record({
  kind: fc.constantFrom('text', 'attr', 'delete', 'double', 'move', 'insert'),
  at: fc.nat(),
  to: fc.nat(),
  value: fc.oneof(fc.constantFrom(...VALUES), fc.string({ maxLength: 4 })),
  name: fc.constantFrom(...NAMES),
  attr: fc.constantFrom(...ATTRS),
});

function editTree(seed: XmlElement, edits: (typeof edit extends fc.Arbitrary<infer E> ? E : never)[]): string {
  const root = clone(seed);
  for (const e of edits) {
    const all = nodes(root);
    const node = all[e.at % all.length];
    const parent = all.find((p) => p.children.includes(node));
    if (e.kind === 'text') node.text = e.value;
    else if (e.kind === 'attr') node.attrs[e.attr] = e.value;
    else if (e.kind === 'insert') node.children.splice(e.to % (node.children.length + 1), 0, { name: e.name, attrs: {}, children: [], text: e.value });
    else if (parent) {
      const i = parent.children.indexOf(node);
      if (e.kind === 'delete') parent.children.splice(i, 1);
      else if (e.kind === 'double') parent.children.splice(i, 0, clone(node));
      else {
        const target = all[e.to % all.length];
        if (!nodes(node).includes(target)) {
          parent.children.splice(i, 1);
          target.children.push(node);
        }
      }
    }
  }
  return serialize(root);
}

interface Tally {
  read: number;
  pieces: number;
  refused: Record<string, number>;
  slowestMs: number;
}

function check(piece: ScorePiece): void {
  for (const n of piece.notes) {
    expect(Number.isFinite(n.onset) && n.onset >= 0 && Number.isFinite(n.duration) && n.duration >= 0).toBe(true);
    expect(Number.isInteger(n.pitch) && n.pitch >= 0 && n.pitch <= 127).toBe(true);
    expect(Number.isInteger(n.morph) && n.morph >= 0 && n.morph <= 255).toBe(true);
    expect(Number.isInteger(n.channel) && n.channel >= 1 && n.channel <= 16).toBe(true);
  }
  expect(Number.isFinite(piece.beats)).toBe(true);
}

/** Reads each input; anything but pieces or a ScoreFileError naming the file fails the property. */
function reader(tally: Tally, read: (text: string) => ScorePiece[], file: string) {
  return (text: string): void => {
    const t0 = performance.now();
    try {
      const pieces = read(text);
      pieces.forEach(check);
      tally.read++;
      tally.pieces += pieces.length;
    } catch (e) {
      if (!(e instanceof ScoreFileError)) throw e;
      expect(e.file).toBe(file);
      const kind = /^[a-z ]+/i.exec(e.reason)?.[0].trim() ?? e.reason;
      tally.refused[kind] = (tally.refused[kind] ?? 0) + 1;
    }
    const ms = performance.now() - t0;
    tally.slowestMs = Math.max(tally.slowestMs, ms);
    expect(ms).toBeLessThan(SLOWEST_MS);
  };
}

function fuzz(name: string, texts: fc.Arbitrary<string>, read: (text: string) => ScorePiece[], file: string): Tally {
  const tally: Tally = { read: 0, pieces: 0, refused: {}, slowestMs: 0 };
  const heap0 = process.memoryUsage().heapUsed;
  let heapMax = heap0;
  const run = reader(tally, read, file);
  fc.assert(
    fc.property(texts, (text) => {
      run(text);
      heapMax = Math.max(heapMax, process.memoryUsage().heapUsed);
    }),
    { numRuns: RUNS, seed: SEED },
  );
  console.log(`${name} fuzz: ${RUNS} inputs (seed ${SEED}), ${tally.read} read (${tally.pieces} pieces), refused ${JSON.stringify(tally.refused)}, slowest ${tally.slowestMs.toFixed(1)} ms, heap +${((heapMax - heap0) / 1e6).toFixed(0)} MB`);
  expect(heapMax - heap0).toBeLessThan(HEAP_GROWTH);
  return tally;
}

describe('the MusicXML reader on hostile text', () => {
  it(`reads or refuses with its own error, ${RUNS} inputs`, () => {
    expect(parseMusicXml(new TextEncoder().encode(SEED_XML), 'seed.musicxml').notes.length).toBeGreaterThan(5);
    const seed = xmlTree(SEED_XML, 'seed.musicxml');
    // Two in three inputs are well-formed scores with their elements changed; the rest, the text mutated and strings of MusicXML's words.
    const structured = fc.array(edit, { minLength: 1, maxLength: 8 }).map((edits) => editTree(seed, edits));
    const tally = fuzz('MusicXML', fc.oneof({ arbitrary: structured, weight: 4 }, { arbitrary: mutated(SEED_XML), weight: 1 }, { arbitrary: wordy(XML_WORDS), weight: 1 }), (text) => [parseMusicXml(new TextEncoder().encode(text), 'fuzz.musicxml')], 'fuzz.musicxml');
    expect(tally.read).toBeGreaterThan(0);
    expect(Object.keys(tally.refused).length).toBeGreaterThan(0);
  });

  it('refuses entity expansion (billion laughs) and outside entities before expanding anything', () => {
    const lol = ['<!ENTITY lol0 "lol">', ...Array.from({ length: 9 }, (_, i) => `<!ENTITY lol${i + 1} "${`&lol${i};`.repeat(10)}">`)].join('\n');
    const laughs = `<?xml version="1.0"?>\n<!DOCTYPE score-partwise [\n${lol}\n]>\n<score-partwise><work><work-title>&lol9;</work-title></work></score-partwise>`;
    const t0 = performance.now();
    expect(() => parseMusicXml(new TextEncoder().encode(laughs), 'laughs.musicxml')).toThrow(/laughs.musicxml: declares entities in its DOCTYPE \(<!ENTITY …>\), which earwitness does not expand/);
    expect(performance.now() - t0).toBeLessThan(1000);
    const outside = '<?xml version="1.0"?><!DOCTYPE score-partwise [<!ENTITY secret SYSTEM "file:///etc/passwd">]><score-partwise><movement-title>&secret;</movement-title></score-partwise>';
    expect(() => parseMusicXml(new TextEncoder().encode(outside), 'outside.xml')).toThrow(/outside.xml: declares entities/);
    // An entity used with no declaration at all is not expanded either: it is not well-formed XML.
    expect(() => parseMusicXml(new TextEncoder().encode('<score-partwise><movement-title>&lol9;</movement-title></score-partwise>'), 'u.xml')).toThrow(/u.xml: is not well-formed XML/);
  });

  it('refuses a zip bomb .mxl at the unpacking limit, whatever the archive declares', () => {
    const zeros = new Uint8Array(100 * 1024 * 1024);
    const bomb = zipSync({ 'META-INF/container.xml': new TextEncoder().encode('<container><rootfiles><rootfile full-path="s.xml"/></rootfiles></container>'), 's.xml': zeros }, { level: 9 });
    expect(bomb.length).toBeLessThan(1024 * 1024);
    // Declare the entry small in both its headers: a reader that trusted them would allocate 1 KiB and overrun it.
    const lying = Uint8Array.from(bomb);
    const view = new DataView(lying.buffer);
    for (let at = 0; at < lying.length - 4; at++) {
      if (view.getUint32(at, true) === 0x04034b50) view.setUint32(at + 22, 1024, true);
      if (view.getUint32(at, true) === 0x02014b50) view.setUint32(at + 24, 1024, true);
    }
    for (const [name, bytes] of [['bomb.mxl', bomb], ['lying.mxl', lying]] as const) {
      const heap0 = process.memoryUsage().heapUsed;
      const t0 = performance.now();
      expect(() => mxlScore(bytes, name)).toThrow(new RegExp(`${name}: unpacks to more than ${MAX_MXL_UNCOMPRESSED / 1024 / 1024} MiB`));
      expect(performance.now() - t0).toBeLessThan(SLOWEST_MS);
      expect(process.memoryUsage().heapUsed - heap0).toBeLessThan(HEAP_GROWTH);
    }
    // Through the file reader too, as a corpus folder reads it.
    writeFileSync(join(dir, 'bomb.mxl'), bomb);
    expect(() => readScoreFile(join(dir, 'bomb.mxl'))).toThrow(ScoreFileError);
  });

  it('refuses repeats that would write out too many bars', () => {
    const forever = `<score-partwise><part id="P1"><measure number="1"><attributes><divisions>1</divisions></attributes><note><pitch><step>C</step><octave>4</octave></pitch><duration>1</duration></note><barline location="right"><repeat direction="backward" times="999999999"/></barline></measure></part></score-partwise>`;
    expect(() => parseMusicXml(new TextEncoder().encode(forever), 'forever.musicxml')).toThrow(/forever.musicxml: its repeats written out come to more than 100,000 bars/);
  });
});

describe('the ABC reader on hostile text', () => {
  it(`reads or refuses with its own error, ${RUNS} inputs`, () => {
    // One tune of the book, with a pickup, repeats and endings, tuplets, a tie, key and metre changes (abcjs takes a few milliseconds a tune).
    const seed = TUNE_BOOK.split('\n\n')[2];
    expect(parseAbc(seed, 'seed.abc').pieces.map((p) => p.title)).toEqual(['Skerrow Jig']);
    // The tune mutated, and strings of ABC's words, half of them starting as a tune does so abcjs reads them rather than the reader finding no tune.
    const texts = fc.oneof({ arbitrary: mutated(seed), weight: 3 }, { arbitrary: wordy(ABC_WORDS).map((w) => `X:1\nK:C\n${w}`), weight: 2 }, { arbitrary: wordy(ABC_WORDS), weight: 2 });
    const tally = fuzz('ABC', texts, (text) => parseAbc(text, 'fuzz.abc').pieces, 'fuzz.abc');
    expect(tally.read).toBeGreaterThan(0);
    expect(tally.pieces).toBeGreaterThan(0);
  });

  it('refuses, tune by tune, what would make abcjs end the process or stall: billions of bars of rest, vast time signatures or a denominator of 0, trills of thousands of whole notes, notes of 10^16 whole notes, an ending numbered in the millions', () => {
    // The first three ended the process with "Fatal JavaScript invalid size error" inside abcjs 6.7.2 before the reader checked for them.
    const cases: [string, RegExp][] = [
      ['Z9999999999|', /rests for 9,999,999,999 bars \(Z\)/],
      ['M:99999999/4\nC|', /has the time signature 99999999\/4/],
      // Found by this fuzz test in CI: a denominator of 0 ended the process the same way.
      ['M:9/0\nC|', /has the time signature 9\/0/],
      // Found by this fuzz test in a clean-clone CI run: not fatal, but abcjs took 85 s to write the trill out.
      ['!trill!A999999<|', /has trills 62,499.938 whole notes long in all/],
      ['L:1/8\nC99999999999999999|', /whole notes long as written/],
      // Not fatal, but minutes long: abcjs steps through every ending number up to this one.
      ['|99999900 C|', /has an ending numbered 99999900/],
    ];
    for (const [body, why] of cases) {
      const t0 = performance.now();
      const read = parseAbc(`X:1\nT:Fine\nK:C\nCDE|\n\nX:2\nT:Vast\nK:C\n${body}\n`, 'vast.abc');
      expect(read.pieces.map((p) => p.title)).toEqual(['Fine']);
      expect(read.skipped).toEqual([{ id: '2', error: expect.stringMatching(why) }]);
      expect(performance.now() - t0).toBeLessThan(SLOWEST_MS);
    }
  });

  it('refuses a file over the size limit without reading it', () => {
    writeFileSync(join(dir, 'big.abc'), 'X:1\nK:C\n' + 'C'.repeat(2000));
    expect(() => readScoreFile(join(dir, 'big.abc'), { maxBytes: 1000 })).toThrow(/big.abc: is 2008 bytes, over the limit of 1000 bytes/);
  });
});
