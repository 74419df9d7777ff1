/**
 * The MusicXML reader (bridge/formats/musicxml.ts, musicxml-part.ts,
 * repeats.ts, mxl.ts) checked against expectations worked by hand from the
 * MusicXML 4.0 specification's rules, on small scores written for the test.
 * music21, the usual outside reader of MusicXML, could not be installed
 * here (no Python package index), so no outside program reads these files.
 *
 * The rules each check leans on (MusicXML 4.0): `<divisions>` is duration
 * units per quarter note and `<duration>` counts them; a `<chord/>` note
 * starts with the note before it; `<backup>` and `<forward>` move the
 * position back and on; `<tie type="start|stop"/>` joins sounding notes;
 * `<repeat direction="forward|backward" times="n"/>` and `<ending
 * number="1, 2" type="start|stop|discontinue"/>` mark repeats; `<transpose>`
 * gives the `<chromatic>` semitones and `<diatonic>` steps from written to
 * sounding pitch; `<grace/>` notes have no duration; `<cue/>` notes are not
 * played; an .mxl file is a zip whose META-INF/container.xml names the score.
 *
 * @example
 *   npx vitest run test/bridge/formats/musicxml.test.ts
 */
import { zipSync } from 'fflate';
import { describe, expect, it } from 'vitest';
import { mxlScore } from '../../../bridge/formats/mxl.js';
import { parseMusicXml } from '../../../bridge/formats/musicxml.js';
import { soundingFifths } from '../../../bridge/formats/musicxml-part.js';
import { playOrder } from '../../../bridge/formats/repeats.js';
import { ScoreFileError } from '../../../bridge/formats/score-piece.js';

/** A note element: pitch like 'C4', 'F#5', 'Bb3', or 'rest'; extra elements inside. */
function note(pitch: string, duration: number, extra = ''): string {
  if (pitch === 'rest') return `<note><rest/><duration>${duration}</duration>${extra}</note>`;
  const m = /^([A-G])(#|b)?(-?\d)$/.exec(pitch)!;
  const alter = m[2] === '#' ? '<alter>1</alter>' : m[2] === 'b' ? '<alter>-1</alter>' : '';
  const chord = extra.includes('<chord/>') ? '<chord/>' : '';
  return `<note>${chord}<pitch><step>${m[1]}</step>${alter}<octave>${m[3]}</octave></pitch><duration>${duration}</duration>${extra.replace('<chord/>', '')}</note>`;
}

const measure = (n: number | string, body: string, attrs = ''): string => `<measure number="${n}"${attrs}>${body}</measure>`;
const attributes = (divisions: number, more = ''): string => `<attributes><divisions>${divisions}</divisions>${more}</attributes>`;

/** A partwise score from parts' measures. */
function score(parts: string[][], head = '', partList = ''): Uint8Array {
  const ids = parts.map((_, i) => `P${i + 1}`);
  const list = partList || ids.map((id) => `<score-part id="${id}"><part-name>${id}</part-name></score-part>`).join('');
  const body = parts.map((measures, i) => `<part id="${ids[i]}">${measures.join('')}</part>`).join('');
  return new TextEncoder().encode(
    `<?xml version="1.0" encoding="UTF-8"?>\n<!DOCTYPE score-partwise PUBLIC "-//Recordare//DTD MusicXML 4.0 Partwise//EN" "http://www.musicxml.org/dtds/partwise.dtd">\n` +
      `<score-partwise version="4.0">${head}<part-list>${list}</part-list>${body}</score-partwise>`,
  );
}

const timing = (bytes: Uint8Array): [number, number, number][] => parseMusicXml(bytes, 'test.musicxml').notes.map((n) => [n.onset, n.duration, n.pitch]);

describe('timing', () => {
  it('turns durations into beats by the divisions, and starts each note where the one before ended', () => {
    // divisions 3: a quarter is 3, a triplet eighth 1; C4 = MIDI 60.
    const bytes = score([[measure(1, attributes(3) + note('C4', 3) + note('D4', 1) + note('E4', 1) + note('F4', 1) + note('G4', 6))]]);
    expect(timing(bytes)).toEqual([
      [0, 1, 60],
      [1, 1 / 3, 62],
      [4 / 3, 1 / 3, 64],
      [5 / 3, 1 / 3, 65],
      [2, 2, 67],
    ]);
  });

  it('starts a <chord/> note with the note before it', () => {
    const bytes = score([[measure(1, attributes(2) + note('C4', 4) + note('E4', 4, '<chord/>') + note('G4', 4, '<chord/>') + note('D4', 2))]]);
    expect(timing(bytes)).toEqual([
      [0, 2, 60],
      [0, 2, 64],
      [0, 2, 67],
      [2, 1, 62],
    ]);
  });

  it('reads a second voice after <backup>, and skips time with <forward>', () => {
    const voice1 = note('E5', 4) + note('D5', 4);
    const voice2 = '<backup><duration>8</duration></backup>' + note('C4', 2) + '<forward><duration>4</duration></forward>' + note('G3', 2);
    expect(timing(score([[measure(1, attributes(2) + voice1 + voice2)]]))).toEqual([
      [0, 1, 60],
      [0, 2, 76],
      [2, 2, 74],
      [3, 1, 55],
    ]);
  });

  it('joins tied notes into one, across the bar line', () => {
    const bytes = score([[measure(1, attributes(1) + note('C4', 2) + note('A4', 2, '<tie type="start"/>')), measure(2, note('A4', 1, '<tie type="stop"/>') + note('B4', 3))]]);
    expect(timing(bytes)).toEqual([
      [0, 2, 60],
      [2, 3, 69],
      [5, 3, 71],
    ]);
  });

  it('leaves out grace notes (no duration) and cue notes (not played); rests take their time', () => {
    const grace = '<note><grace/><pitch><step>B</step><octave>4</octave></pitch></note>';
    const bytes = score([[measure(1, attributes(1) + grace + note('C5', 1) + note('rest', 1) + note('D5', 1, '<cue/>') + note('E5', 1))]]);
    expect(timing(bytes)).toEqual([
      [0, 1, 72],
      [3, 1, 76],
    ]);
  });

  it('starts the bar after a pickup where the pickup ends', () => {
    const pickup = measure(0, attributes(1, '<time><beats>3</beats><beat-type>4</beat-type></time>') + note('G4', 1), ' implicit="yes"');
    expect(timing(score([[pickup, measure(1, note('C5', 3))]]))).toEqual([
      [0, 1, 67],
      [1, 3, 72],
    ]);
  });
});

describe('repeats and endings', () => {
  const forward = '<barline location="left"><repeat direction="forward"/></barline>';
  const backward = (times = '') => `<barline location="right"><repeat direction="backward"${times}/></barline>`;
  const ending = (n: string, type: string, location: string) => `<barline location="${location}"><ending number="${n}" type="${type}"/></barline>`;

  it('plays |: A |1 B :|2 C | as A B A C', () => {
    const bytes = score([
      [
        measure(1, attributes(1) + forward + note('A4', 1)),
        measure(2, ending('1', 'start', 'left') + note('B4', 1) + ending('1', 'stop', 'right') + backward()),
        measure(3, ending('2', 'start', 'left') + note('C5', 1) + ending('2', 'discontinue', 'right')),
      ],
    ]);
    expect(timing(bytes)).toEqual([
      [0, 1, 69],
      [1, 1, 71],
      [2, 1, 69],
      [3, 1, 72],
    ]);
  });

  it('takes a backward repeat times − 1 times, back to the start when there is no forward repeat', () => {
    const bytes = score([[measure(1, attributes(1) + note('C4', 1)), measure(2, note('D4', 1) + backward(' times="3"')), measure(3, note('E4', 1))]]);
    expect(timing(bytes).map(([on, , p]) => [on, p])).toEqual([
      [0, 60],
      [1, 62],
      [2, 60],
      [3, 62],
      [4, 60],
      [5, 62],
      [6, 64],
    ]);
  });

  it('writes out the order of bars with endings for several passes', () => {
    // |: A |1,2 B :|3 C |   (times 3): A B A B A C
    const bars = [
      { forward: true, times: 0, endings: null },
      { forward: false, times: 3, endings: [1, 2] },
      { forward: false, times: 0, endings: [3] },
    ];
    expect(playOrder(bars)).toEqual([0, 1, 0, 1, 0, 2]);
    // |: A :|: B :| C : a second section repeats from just after the first.
    expect(playOrder([{ forward: true, times: 0, endings: null }, { forward: false, times: 2, endings: null }, { forward: false, times: 2, endings: null }, { forward: false, times: 0, endings: null }])).toEqual([0, 1, 0, 1, 2, 2, 3]);
  });

  it('refuses repeats that would write out too many bars', () => {
    expect(() => playOrder([{ forward: false, times: 1_000_000_000, endings: null }], 1000)).toThrow(/more than 1,000 bars/);
  });
});

describe('pitch and spelling', () => {
  it('takes the spelling the score states: F sharp and G flat differ in morphetic pitch (C4 = 60, one step a letter)', () => {
    const notes = parseMusicXml(score([[measure(1, attributes(1) + note('F#4', 1) + note('Gb4', 1) + note('B3', 1) + note('C4', 1))]]), 't.musicxml').notes;
    expect(notes.map((n) => [n.pitch, n.morph])).toEqual([
      [66, 63],
      [66, 64],
      [59, 59],
      [60, 60],
    ]);
  });

  it('plays a transposing part at sounding pitch, its letters moved by <diatonic> steps', () => {
    // A part in B flat: written D5 sounds C5 (chromatic −2, diatonic −1).
    const bflat = attributes(1, '<key><fifths>0</fifths></key><transpose><diatonic>-1</diatonic><chromatic>-2</chromatic></transpose>');
    const piece = parseMusicXml(score([[measure(1, bflat + note('D5', 1) + note('F#5', 1))]]), 'clarinet.musicxml');
    expect(piece.notes.map((n) => [n.pitch, n.morph])).toEqual([
      [72, 67],
      [76, 69],
    ]);
    expect(piece.key).toMatchObject({ fifths: -2, mode: 'major' }); // written C major sounds B flat major
    // A part in F an octave down with <octave-change>: written C5 sounds F3 (−7 semitones, −4 steps, −1 octave).
    const horn = attributes(1, '<transpose><diatonic>-4</diatonic><chromatic>-7</chromatic><octave-change>-1</octave-change></transpose>');
    expect(parseMusicXml(score([[measure(1, horn + note('C5', 1))]]), 'horn.musicxml').notes.map((n) => [n.pitch, n.morph])).toEqual([[53, 56]]);
    // A part doubled an octave below (<double/>) plays both.
    const doubled = attributes(1, '<transpose><diatonic>0</diatonic><chromatic>0</chromatic><double/></transpose>');
    expect(parseMusicXml(score([[measure(1, doubled + note('E4', 1))]]), 'd.musicxml').notes.map((n) => n.pitch)).toEqual([52, 64]);
  });

  it('moves a written key signature to sounding pitch along the line of fifths', () => {
    expect(soundingFifths(0, { chromatic: -2, diatonic: -1 })).toBe(-2); // in B flat: C → B flat
    expect(soundingFifths(1, { chromatic: -7, diatonic: -4 })).toBe(0); // in F: G → C
    expect(soundingFifths(0, { chromatic: -9, diatonic: -5 })).toBe(-3); // in E flat, a major sixth down: C → E flat, three flats
    expect(soundingFifths(6, { chromatic: 1, diatonic: 0 })).toBe(1); // F sharp major a chromatic semitone up is F double sharp (13 places): G major, its enharmonic twin
  });
});

describe('the score', () => {
  it('takes its title from <work-title>, else <movement-title>', () => {
    expect(parseMusicXml(score([[measure(1, attributes(1) + note('C4', 1))]], '<work><work-title>Net Loft</work-title></work><movement-title>II</movement-title>'), 't.xml').title).toBe('Net Loft');
    expect(parseMusicXml(score([[measure(1, attributes(1) + note('C4', 1))]], '<movement-title>Slipway</movement-title>'), 't.xml').title).toBe('Slipway');
  });

  it('keeps each time signature where it takes effect, repeats written out', () => {
    const bytes = score([
      [
        measure(1, attributes(1, '<time><beats>3</beats><beat-type>4</beat-type></time>') + '<barline location="left"><repeat direction="forward"/></barline>' + note('C4', 3)),
        measure(2, '<attributes><time><beats>2+3</beats><beat-type>8</beat-type></time></attributes>' + note('D4', 2) + note('E4', 0.5) + '<barline location="right"><repeat direction="backward"/></barline>'),
      ],
    ]);
    expect(parseMusicXml(bytes, 't.musicxml').meters).toEqual([
      { beat: 0, numerator: 3, denominator: 4 },
      { beat: 3, numerator: 5, denominator: 8 },
      { beat: 5.5, numerator: 3, denominator: 4 },
      { beat: 8.5, numerator: 5, denominator: 8 },
    ]);
  });

  it('puts each part on its own channel, the one its <midi-instrument> names, and leaves out a part on channel 10', () => {
    const list =
      '<score-part id="P1"><part-name>Fiddle</part-name></score-part>' +
      '<score-part id="P2"><part-name>Cello</part-name><midi-instrument id="P2-I1"><midi-channel>5</midi-channel></midi-instrument></score-part>' +
      '<score-part id="P3"><part-name>Drum</part-name><midi-instrument id="P3-I1"><midi-channel>10</midi-channel></midi-instrument></score-part>';
    const bytes = score([[measure(1, attributes(1) + note('A4', 1))], [measure(1, attributes(1) + note('C3', 1))], [measure(1, attributes(1) + note('F4', 1))]], '', list);
    expect(parseMusicXml(bytes, 't.musicxml').notes.map((n) => [n.pitch, n.channel])).toEqual([
      [48, 5],
      [69, 1],
    ]);
    expect(parseMusicXml(bytes, 't.musicxml', { percussion: true }).notes.map((n) => n.channel).sort((a, b) => a - b)).toEqual([1, 5, 10]);
  });

  it('reads a timewise score as the same partwise one', () => {
    const partwise = score([[measure(1, attributes(1) + note('C4', 1)), measure(2, note('D4', 1))], [measure(1, attributes(1) + note('E3', 2)), measure(2, note('F3', 1))]]);
    const timewise = new TextEncoder().encode(
      '<?xml version="1.0"?><score-timewise version="4.0"><part-list><score-part id="P1"/><score-part id="P2"/></part-list>' +
        `<measure number="1"><part id="P1">${attributes(1) + note('C4', 1)}</part><part id="P2">${attributes(1) + note('E3', 2)}</part></measure>` +
        `<measure number="2"><part id="P1">${note('D4', 1)}</part><part id="P2">${note('F3', 1)}</part></measure></score-timewise>`,
    );
    expect(parseMusicXml(timewise, 'tw.musicxml').notes).toEqual(parseMusicXml(partwise, 'pw.musicxml').notes);
  });

  it('reads UTF-16 with a byte order mark', () => {
    const text = new TextDecoder().decode(score([[measure(1, attributes(1) + note('C4', 1))]], '<work><work-title>Ébb</work-title></work>')).replace('UTF-8', 'UTF-16');
    const utf16 = Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(text, 'utf16le')]);
    expect(parseMusicXml(utf16, 'w.musicxml')).toMatchObject({ title: 'Ébb', notes: [{ pitch: 60 }] });
  });
});

describe('compressed MusicXML (.mxl)', () => {
  const inner = score([[measure(1, attributes(1) + note('G4', 1))]]);
  const container = new TextEncoder().encode('<?xml version="1.0"?><container><rootfiles><rootfile full-path="scores/tune.musicxml" media-type="application/vnd.recordare.musicxml+xml"/></rootfiles></container>');

  it('reads the score META-INF/container.xml names', () => {
    const zip = zipSync({ 'mimetype': new TextEncoder().encode('application/vnd.recordare.musicxml'), 'META-INF/container.xml': container, 'scores/tune.musicxml': inner, 'scores/other.xml': score([[measure(1, attributes(1) + note('C4', 1))]]) });
    const found = mxlScore(zip, 'tune.mxl');
    expect(found.path).toBe('scores/tune.musicxml');
    expect(parseMusicXml(found.bytes, 'tune.mxl').notes.map((n) => n.pitch)).toEqual([67]);
  });

  it('reads stored (uncompressed) entries, and finds the score without a container file', () => {
    const zip = zipSync({ 'tune.musicxml': [inner, { level: 0 }] });
    expect(mxlScore(zip, 'stored.mxl').path).toBe('tune.musicxml');
  });

  it('refuses what is not a zip archive, or names a score it does not hold', () => {
    expect(() => mxlScore(new TextEncoder().encode('not a zip archive at all, just words'), 'x.mxl')).toThrow(/x.mxl: is not a compressed MusicXML file: it is not a zip archive/);
    expect(() => mxlScore(zipSync({ 'META-INF/container.xml': container }), 'y.mxl')).toThrow(/names scores\/tune.musicxml as its score .* holds no such file/);
  });
});

describe('files that are not MusicXML', () => {
  it('are refused with the reason', () => {
    const read = (s: string) => () => parseMusicXml(new TextEncoder().encode(s), 'bad.xml');
    expect(read('<html><body/></html>')).toThrow(ScoreFileError);
    expect(read('<html><body/></html>')).toThrow(/bad.xml: is not MusicXML: its root element is <html>/);
    expect(read('<score-partwise><part-list>')).toThrow(/bad.xml: is not well-formed XML/);
    expect(read('<score-partwise><part id="P1"><measure><note><pitch><step>C</step><octave>4</octave></pitch><duration>1</duration></note></measure></part></score-partwise>')).toThrow(
      /a <duration> comes before any <divisions>/,
    );
  });
});
