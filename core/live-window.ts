/**
 * The rolling window of what was just played: the notes whose onsets lie
 * within the last W beats before the newest, (newest − W, newest]. It is
 * matched as the W beats from its first note, [first, first + W), which
 * holds the same notes, so a match's excerpt starts where the played
 * passage does in the piece.
 *
 * Notes may arrive a little out of order (a bundle, a chord); each is put
 * in its place. A note that lands a whole window or more behind the newest
 * means the sender's clock went back (a loop restarted, MIDI Start): the
 * window starts over from it rather than ignoring everything after. The
 * window holds at most `maxNotes`; past that the oldest leave early and are
 * counted as dropped, so a flood cannot make one evaluation unbounded.
 *
 * @example
 *   const w = new LiveWindow({ beats: 4, maxNotes: 1024 });
 *   w.add({ onset: 0, pitch: 60 }); w.add({ onset: 3.5, pitch: 62 }); w.add({ onset: 4.25, pitch: 64 });
 *   w.notes.map((n) => n.onset)   // → [3.5, 4.25]   (0 is 4.25 beats behind the newest)
 *   w.startGrains                  // → toGrains(3.5)
 */
import { toGrains } from './note.js';

export interface WindowNote {
  /** Onset in beats. */
  onset: number;
  pitch: number;
}

export interface LiveWindowOptions {
  /** Window length in beats. */
  beats: number;
  /** Most notes held at once. */
  maxNotes: number;
}

export class LiveWindow<N extends WindowNote = WindowNote> {
  readonly beats: number;
  private readonly widthGrains: number;
  private readonly maxNotes: number;
  private held: N[] = [];
  /** Notes that left before their time because the window was full. */
  dropped = 0;
  /** Times the window started over because a note landed a window or more behind the newest. */
  restarts = 0;

  constructor(options: LiveWindowOptions) {
    if (!(Number.isFinite(options.beats) && options.beats > 0)) throw new RangeError(`window must be a positive number of beats, got ${options.beats}`);
    if (!(Number.isInteger(options.maxNotes) && options.maxNotes > 0)) throw new RangeError(`maxNotes must be a positive whole number, got ${options.maxNotes}`);
    this.beats = options.beats;
    this.widthGrains = toGrains(options.beats);
    this.maxNotes = options.maxNotes;
  }

  /** The window's notes, by onset (equal onsets in arrival order). */
  get notes(): readonly N[] {
    return this.held;
  }

  /** Where the window is matched from: its first note's onset, in grains (0 when empty). */
  get startGrains(): number {
    return this.held.length ? toGrains(this.held[0].onset) : 0;
  }

  /** First grain a note may have and stay: one past newest − W. */
  private get keepFrom(): number {
    const newest = this.held[this.held.length - 1];
    return newest ? toGrains(newest.onset) - this.widthGrains + 1 : 0;
  }

  add(note: N): void {
    const at = toGrains(note.onset);
    if (this.held.length > 0 && at < this.keepFrom) {
      this.held = [];
      this.restarts++;
    }
    let i = this.held.length;
    while (i > 0 && toGrains(this.held[i - 1].onset) > at) i--;
    this.held.splice(i, 0, note);
    const start = this.keepFrom;
    let gone = 0;
    while (gone < this.held.length && toGrains(this.held[gone].onset) < start) gone++;
    const over = Math.max(0, this.held.length - gone - this.maxNotes);
    this.dropped += over;
    if (gone + over > 0) this.held.splice(0, gone + over);
  }

  clear(): void {
    this.held = [];
  }
}
