#!/usr/bin/env node
import { run } from './cli/program.js';

run(process.argv).then((code) => {
  process.exitCode = code;
});
