/** The earwitness command line: every command, with the exit codes they share. */
import { Command, CommanderError } from 'commander';
import { registerReport } from './commands/report.js';
import { registerCorpus } from './commands/corpus.js';
import { registerCheck } from './commands/check.js';
import { registerDemo } from './commands/demo.js';
import { registerListen } from './commands/listen.js';
import { registerReview } from './commands/review.js';
import { registerScore } from './commands/score.js';
import { registerWorker } from './commands/worker.js';
import { EXIT, Outcome } from './usage.js';
import { UsageError } from '../formats/user-error.js';
import { IndexFileError } from '../formats/index-file.js';
import { ScoreFileError } from '../formats/score-piece.js';

export function program(): Command {
  const cli = new Command('earwitness')
    .description('Hears what you play and warns when it quotes the reference corpus.')
    .addHelpText('after', `
Exit codes:
  0  done
  1  check: the queries' originality is below the bar
  2  bad command line, or input that cannot be used (the message says which)

A similarity score is evidence for a musician's judgement, not a legal finding.`);
  registerScore(cli);
  registerReport(cli);
  registerCorpus(cli);
  registerListen(cli);
  registerReview(cli);
  registerCheck(cli);
  registerDemo(cli);
  registerWorker(cli);
  return cli;
}

/** Runs the command line; resolves to the exit code. */
export async function run(argv: string[]): Promise<number> {
  const cli = program();
  const override = (c: Command): void => {
    c.exitOverride();
    c.commands.forEach(override);
  };
  override(cli);
  try {
    await cli.parseAsync(argv);
    return EXIT.ok;
  } catch (e) {
    if (e instanceof CommanderError) return e.exitCode === 0 ? EXIT.ok : EXIT.usage;
    if (e instanceof Outcome) return e.code;
    const known = e instanceof UsageError || e instanceof IndexFileError || (e as Error).name === 'MidiFileError' || e instanceof ScoreFileError || e instanceof RangeError;
    process.stderr.write(`earwitness: ${(e as Error).message}\n`);
    if (!known) process.stderr.write(`${(e as Error).stack}\n`);
    return EXIT.usage;
  }
}
