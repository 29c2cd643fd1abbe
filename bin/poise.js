#!/usr/bin/env node
'use strict';
// The bundles (dist/cli.js, dist/server.js, built by `npm run build`) start fastest; out/ is the plain
// tsc output, used when the bundles are absent.
const fs = require('fs');
const path = require('path');
const dist = (name) => path.join(__dirname, '..', 'dist', name);
const args = process.argv.slice(2);

// the language server reads --stdio / --node-ipc from the command line; it is kept out of the CLI bundle.
// Without a transport, or with --help or an option it does not know, the CLI answers instead (a message,
// not a stack trace from the protocol library).
const lspOptions = (a) => a === '--stdio' || a === '--node-ipc' || /^--clientProcessId(=\d+)?$/.test(a) || /^\d+$/.test(a);
if (args[0] === 'lsp' && args.slice(1).some((a) => a === '--stdio' || a === '--node-ipc') && args.slice(1).every(lspOptions)) {
  require(fs.existsSync(dist('server.js')) ? dist('server.js') : '../out/server/src/lsp/main.js');
} else {
  const cli = fs.existsSync(dist('cli.js')) ? require(dist('cli.js')) : require('../out/server/src/cli/main.js');
  cli.main(args).then(
    (code) => { process.exitCode = code; },
    (err) => { process.stderr.write(`poise: internal error: ${(err && err.stack) || err}\n`); process.exitCode = 2; },
  );
}
