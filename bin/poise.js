#!/usr/bin/env node
'use strict';
require('../out/server/src/cli/main.js').main(process.argv.slice(2)).then(
  (code) => { process.exitCode = code; },
  (err) => { process.stderr.write(`poise: internal error: ${err && err.stack || err}\n`); process.exitCode = 2; },
);
