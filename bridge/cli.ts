#!/usr/bin/env node
import { run } from './program.js';

run(process.argv).then((code) => {
  process.exitCode = code;
});
