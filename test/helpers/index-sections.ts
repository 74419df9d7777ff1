/**
 * An index file's section table read straight off its bytes, for tests that
 * damage or compare sections (bridge/formats/index-file.md: 24-byte entries
 * from byte 24, each a 4-byte tag, its CRC-32, offset and length).
 *
 * @example
 *   sectionTable(readFileSync(file)).get('NATS')   // → { entry: 48, crc: 2205391, offset: 7896432, length: 400005944 }
 */
export interface SectionEntry {
  /** Where the entry itself is in the file. */
  entry: number;
  crc: number;
  offset: number;
  length: number;
}

export function sectionTable(bytes: Uint8Array): Map<string, SectionEntry> {
  const view = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const out = new Map<string, SectionEntry>();
  for (let i = 0; i < view.readUInt32LE(12); i++) {
    const e = 24 + 24 * i;
    out.set(view.toString('latin1', e, e + 4), { entry: e, crc: view.readUInt32LE(e + 4), offset: Number(view.readBigUInt64LE(e + 8)), length: Number(view.readBigUInt64LE(e + 16)) });
  }
  return out;
}
