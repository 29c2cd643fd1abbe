#!/usr/bin/env node
'use strict';
// The bundles (dist/cli.js, dist/server.js, built by `npm run build`) start fastest; out/ is the plain
// tsc output, used when the bundles are absent.
const fs = require('fs');
const path = require('path');
const dist = (name) => path.join(__dirname, '..', 'dist', name);
const args = process.argv.slice(2);

/**
 * Loads dist/cli.js with V8's code cache dist/cli.cache (written by `node scripts/bundle.mjs cli` after a
 * sample run, so it also holds the functions a run compiles): start-up then skips most parsing and
 * compiling. Node 20 has no module.enableCompileCache; this is the same idea by hand. V8 rejects a cache
 * that does not match the source or the engine, and the bundle then compiles as usual.
 * POISE_CODE_CACHE_WRITE=FILE writes the cache after the run.
 */
function loadCli() {
  const file = dist('cli.js');
  if (!fs.existsSync(file)) return require('../out/server/src/cli/main.js');
  const writeTo = process.env.POISE_CODE_CACHE_WRITE;
  let cachedData;
  if (!writeTo) {
    try {
      cachedData = fs.readFileSync(dist('cli.cache'));
    } catch {
      return require(file);
    }
  }
  const vm = require('vm');
  const Module = require('module');
  const script = new vm.Script(Module.wrap(fs.readFileSync(file, 'utf8')), { filename: file, cachedData });
  const m = new Module(file, module);
  m.filename = file;
  m.paths = Module._nodeModulePaths(path.dirname(file));
  script.runInThisContext().call(m.exports, m.exports, (id) => m.require(id), m, file, path.dirname(file));
  m.loaded = true;
  if (writeTo) process.on('exit', () => fs.writeFileSync(writeTo, script.createCachedData()));
  return m.exports;
}

// the language server reads --stdio / --node-ipc from the command line; it is kept out of the CLI bundle.
// Without a transport, or with --help or an option it does not know, the CLI answers instead (a message,
// not a stack trace from the protocol library).
const lspOptions = (a) => a === '--stdio' || a === '--node-ipc' || /^--clientProcessId(=\d+)?$/.test(a) || /^\d+$/.test(a);
if (args[0] === 'lsp' && args.slice(1).some((a) => a === '--stdio' || a === '--node-ipc') && args.slice(1).every(lspOptions)) {
  require(fs.existsSync(dist('server.js')) ? dist('server.js') : '../out/server/src/lsp/main.js');
} else {
  // output piped into a reader that stops early (`| head`): the rest is not wanted, so end quietly, as
  // command-line tools do, instead of an unhandled EPIPE stack trace
  for (const stream of [process.stdout, process.stderr]) {
    stream.on('error', (err) => {
      if (err && err.code === 'EPIPE') process.exit(process.exitCode ?? 0);
      throw err;
    });
  }
  const cli = loadCli();
  cli.main(args).then(
    (code) => { process.exitCode = code; },
    (err) => { process.stderr.write(`poise: internal error: ${(err && err.stack) || err}\n`); process.exitCode = 2; },
  );
}
