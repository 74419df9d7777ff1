import type { Command } from 'commander';
import { type PitchMode, toPoints } from '../../../core/note.js';
import { cardinalityScore } from '../../../core/cardinality.js';
import { CAUTION } from '../../../core/report.js';
import { readOnePiece } from '../../formats/read-file.js';
import { pitchOption, printJson } from '../options.js';
import { beatsWords, transpositionWords } from '../../../core/words.js';

export function registerScore(cli: Command): void {
  cli
    .command('score')
    .description('cardinality score of two pieces (MIDI, MusicXML or ABC files; one tune of a tune book as book.abc#X): the most notes of A that one translation lands on notes of B, over the larger size')
    .argument('<a>', 'first piece')
    .argument('<b>', 'second piece')
    .addOption(pitchOption())
    .option('--percussion', 'keep channel 10 (percussion)')
    .option('--json', 'print JSON')
    .action((a: string, b: string, o: { pitch: PitchMode; percussion?: boolean; json?: boolean }) => {
      const [pa, pb] = [a, b].map((f) => toPoints(readOnePiece(f, o).notes, o.pitch));
      const r = cardinalityScore(pa, pb);
      if (o.json) return printJson({ ...r, caution: CAUTION });
      const t = r.translation;
      // The translation takes a onto b; told the way reports tell it, from b (the other) to a (yours).
      const when = t && t.beats !== 0 ? `, ${beatsWords(Math.abs(t.beats))} ${t.beats > 0 ? 'earlier' : 'later'}` : '';
      const how = t ? `; ${a} plays ${b}'s notes ${transpositionWords(-t.pitch, o.pitch)}${when}` : '';
      process.stdout.write(`score ${r.score.toFixed(3)}: ${r.matched} notes coincide, of max(${r.sizes[0]}, ${r.sizes[1]})${how}\n\n${CAUTION}\n`);
    });
}
