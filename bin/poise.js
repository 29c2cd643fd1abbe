#!/usr/bin/env node
'use strict';
// The bundled CLI (dist/cli.js, built by `npm run build`) starts fastest; out/ is the plain tsc output.
const fs = require('fs');
const path = require('path');
const bundled = path.join(__dirname, '..', 'dist', 'cli.js');
const cli = fs.existsSync(bundled) ? require(bundled) : require('../out/server/src/cli/main.js');
cli.main(process.argv.slice(2)).then(
  (code) => { process.exitCode = code; },
  (err) => { process.stderr.write(`poise: internal error: ${(err && err.stack) || err}\n`); process.exitCode = 2; },
);
