/** The parts of the `osc` package (which ships no types) the daemon uses: its OSC 1.0 codec. */
declare module 'osc' {
  export interface OscArgument {
    type: string;
    value: unknown;
  }
  export interface OscMessage {
    address: string;
    args: OscArgument[];
  }
  export interface TimeTag {
    /** NTP seconds since 1900 and fraction; [0, 1] means "immediately". */
    raw: [number, number];
    /** ms since the epoch. */
    native: number;
  }
  export interface OscBundle {
    timeTag: TimeTag | { native: number };
    packets: (OscMessage | OscBundle)[];
  }
  export interface CodecOptions {
    metadata?: boolean;
    unpackSingleArgs?: boolean;
  }
  export function readPacket(data: Uint8Array, options?: CodecOptions): OscMessage | OscBundle;
  export function writePacket(packet: OscMessage | OscBundle, options?: CodecOptions): Uint8Array;
  export function timeTag(secondsFromNow: number, now?: number): { raw: [number, number] };
  const osc: {
    readPacket: typeof readPacket;
    writePacket: typeof writePacket;
    timeTag: typeof timeTag;
  };
  export default osc;
}
