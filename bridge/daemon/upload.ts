/**
 * The files a `POST /report` brings: one Standard MIDI File as the raw body
 * (`Content-Type: audio/midi`, or `audio/x-midi`), or several as the file
 * parts of a `multipart/form-data` body (RFC 7578; parts and boundaries as
 * RFC 2046 §5.1 has them, parsed by @fastify/busboy), each named by its
 * part's filename. The body is counted as it arrives and refused the moment
 * it passes the limit (or at once, when its Content-Length already does),
 * so an oversized body is never held in memory.
 *
 * Every refusal is a `Refusal`: the HTTP status (RFC 9110 §15) and words
 * saying what was wrong and what to send instead.
 *
 * @example
 *   const files = await readUpload(req, { limit: 16 * 1024 * 1024, rawName: 'take-3.mid' });
 *   // → [{ name: 'take-3.mid', bytes: Uint8Array(1234) }]
 *   // throws Refusal(415, 'a body of type text/plain …') / Refusal(413, 'the request body is over …')
 */
import type { IncomingMessage } from 'node:http';
import { Busboy, type BusboyHeaders, type BusboyInstance } from '@fastify/busboy';
import type { UploadedFile } from './reports.js';

/** The media types of a Standard MIDI File: audio/midi, and the older audio/x-midi. */
export const MIDI_TYPES = ['audio/midi', 'audio/x-midi'] as const;
/** Most files one multipart body may carry. */
export const MAX_UPLOAD_FILES = 256;

/** A request refused: its HTTP status and what to tell the sender. */
export class Refusal extends Error {
  constructor(readonly status: number, message: string, readonly details: Record<string, unknown> = {}) {
    super(message);
    this.name = 'Refusal';
  }
}

export interface UploadOptions {
  /** Largest body accepted, in bytes. */
  limit: number;
  /** The name a raw body's file is reported under. */
  rawName: string;
}

/** Says the limit in the words of the 413 answer: bytes, and MiB when whole. */
export const limitWords = (limit: number): string => `${limit} bytes${limit % (1 << 20) === 0 ? ` (${limit >> 20} MiB)` : ''}; earwitness listen --report-limit BYTES sets it`;

const tooLarge = (limit: number): Refusal => new Refusal(413, `the request body is over the limit of ${limitWords(limit)}`, { limit });

/** The media type of a Content-Type header, lower case, without its parameters. */
export const mediaType = (header: string | undefined): string => (header ?? '').split(';')[0].trim().toLowerCase();

export async function readUpload(req: IncomingMessage, options: UploadOptions): Promise<UploadedFile[]> {
  const type = mediaType(req.headers['content-type']);
  const isMidi = (MIDI_TYPES as readonly string[]).includes(type);
  if (!isMidi && type !== 'multipart/form-data') {
    throw new Refusal(415, `a body of type ${type || '(none given)'} cannot be read: send one MIDI file with Content-Type: ${MIDI_TYPES.join(' or ')}, or several as multipart/form-data`, { accepted: [...MIDI_TYPES, 'multipart/form-data'] });
  }
  const declared = Number(req.headers['content-length'] ?? 0);
  if (declared > options.limit) throw tooLarge(options.limit);
  if (isMidi) return [{ name: options.rawName, bytes: await bodyWithin(req, options.limit) }];
  return multipartFiles(req, options.limit);
}

/** The raw body, refused as soon as it passes `limit`. */
function bodyWithin(req: IncomingMessage, limit: number): Promise<Uint8Array> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    req.on('data', (chunk: Buffer) => {
      size += chunk.length;
      if (size > limit) {
        req.removeAllListeners('data');
        req.pause();
        return reject(tooLarge(limit));
      }
      chunks.push(chunk);
    });
    req.on('end', () => resolve(new Uint8Array(Buffer.concat(chunks))));
    req.on('error', reject);
  });
}

/** The file parts of a multipart/form-data body; a part with no filename and no MIDI type is a form field, refused. */
function multipartFiles(req: IncomingMessage, limit: number): Promise<UploadedFile[]> {
  return new Promise((resolve, reject) => {
    const files: Promise<UploadedFile>[] = [];
    let failed = false;
    const fail = (e: Refusal): void => {
      if (failed) return;
      failed = true;
      req.unpipe(parser);
      req.pause();
      reject(e);
    };
    let parser: BusboyInstance;
    try {
      parser = Busboy({
        headers: req.headers as BusboyHeaders,
        limits: { files: MAX_UPLOAD_FILES, fileSize: limit },
        isPartAFile: (_field: string | undefined, contentType: string | undefined, filename: string | undefined) => filename !== undefined || (MIDI_TYPES as readonly string[]).includes(mediaType(contentType)),
      });
    } catch (e) {
      // No boundary parameter, say (RFC 2046 §5.1.1 requires one).
      return reject(new Refusal(400, `the multipart/form-data body cannot be read: ${(e as Error).message}`));
    }
    let size = 0;
    req.on('data', (chunk: Buffer) => {
      size += chunk.length;
      if (size > limit) fail(tooLarge(limit));
    });
    parser.on('file', (field, stream, filename) => {
      const name = filename || field;
      files.push(
        new Promise((ok) => {
          const chunks: Buffer[] = [];
          stream.on('data', (c: Buffer) => chunks.push(c));
          stream.on('error', () => ok({ name, bytes: new Uint8Array() }));
          stream.on('end', () => ok({ name, bytes: new Uint8Array(Buffer.concat(chunks)) }));
        }),
      );
    });
    parser.on('field', (field) => fail(new Refusal(400, `form field "${field}" is not a file: send each MIDI file as a file part, as curl -F 'take=@take.mid' does`)));
    parser.on('filesLimit', () => fail(new Refusal(413, `more than ${MAX_UPLOAD_FILES} files in one request; send them in several`)));
    parser.on('error', (e: Error) => fail(new Refusal(400, `the multipart/form-data body cannot be read (${e.message})`)));
    parser.on('finish', () => {
      if (failed) return;
      void Promise.all(files).then((read) => {
        if (read.length === 0) return fail(new Refusal(400, 'the multipart/form-data body holds no file: send each MIDI file as a file part, as curl -F \'take=@take.mid\' does'));
        resolve(read);
      });
    });
    req.pipe(parser);
  });
}
