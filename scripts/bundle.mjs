// Bundles the extension for packaging with esbuild:
//   client/src/extension.ts -> dist/extension.js   (CommonJS, node, `vscode` left external)
//   server/src/lsp/main.ts  -> dist/server.js      (CommonJS, node; started by the client over node IPC)
// Environment: POISE_SERVER_ENTRY overrides the server entry (for trying the bundle before the server
// exists), POISE_SOURCEMAP=1 adds linked source maps, POISE_MINIFY=1 minifies.
import { build } from 'esbuild';
import { existsSync, readFileSync, rmSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const clientEntry = resolve(root, 'client/src/extension.ts');
const serverEntry = resolve(root, process.env.POISE_SERVER_ENTRY || 'server/src/lsp/main.ts');
// `poise --version` of the bundle: the version is written into it here (the bundle has no package.json beside it)
const version = JSON.parse(readFileSync(resolve(root, 'package.json'), 'utf8')).version;

const common = {
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'cjs',
  sourcemap: process.env.POISE_SOURCEMAP === '1' ? 'linked' : false,
  minify: process.env.POISE_MINIFY === '1',
  logLevel: 'warning',
  absWorkingDir: root,
  // lets an entry outside the repository (POISE_SERVER_ENTRY) use the project's packages
  nodePaths: [resolve(root, 'node_modules')],
};

/**
 * mathjs in its own file beside the bundles (dist/mathjs-units.js, only `create` and `unitDependencies`):
 * core/semantics/units.ts requires it on first need, so the command and the server do not read and compile
 * about 460 KB of it at every start.
 */
const mathjsApart = {
  name: 'mathjs-apart',
  setup(b) {
    b.onResolve({ filter: /^mathjs$/ }, () => ({ path: './mathjs-units.js', external: true }));
  },
};

async function bundleMathjs() {
  const started = Date.now();
  const result = await build({
    ...common, stdin: { contents: "export { create, unitDependencies } from 'mathjs';", resolveDir: root, loader: 'js' },
    outfile: resolve(root, 'dist/mathjs-units.js'), metafile: true,
  });
  const bytes = Object.values(result.metafile.outputs).reduce((n, o) => n + o.bytes, 0);
  console.log(`bundle: mathjs units -> dist/mathjs-units.js (${(bytes / 1024).toFixed(0)} KB, ${Date.now() - started} ms)`);
}

async function bundle(name, entry, outfile, external) {
  const started = Date.now();
  const define = { POISE_VERSION: JSON.stringify(version) };
  const plugins = external.includes('vscode') ? [] : [mathjsApart];
  const result = await build({ ...common, entryPoints: [entry], outfile: resolve(root, outfile), external, metafile: true, define, plugins });
  const bytes = Object.values(result.metafile.outputs).reduce((n, o) => n + o.bytes, 0);
  console.log(`bundle: ${name} -> ${outfile} (${(bytes / 1024).toFixed(0)} KB, ${Date.now() - started} ms)`);
}

/**
 * V8's code cache of dist/cli.js (bin/poise.js loads it): one sample run of the command on an example
 * compiles what a run needs, and the cache is written at its exit. A failure only costs start-up time.
 */
function codeCache() {
  const out = resolve(root, 'dist/cli.cache');
  rmSync(out, { force: true });
  const example = resolve(root, 'examples/gantry_crane.poise');
  const r = spawnSync(process.execPath, [resolve(root, 'bin/poise.js'), 'linearize', example, '--format', 'json'], {
    env: { ...process.env, POISE_CODE_CACHE_WRITE: out },
    stdio: 'ignore',
  });
  if (r.status !== 0 || !existsSync(out)) console.warn('bundle: no code cache for dist/cli.js (the command starts a little slower)');
}

const only = process.argv[2];
try {
  if (only === 'cli' || !only) {
    await bundleMathjs();
    // the command-line tool as one file: starts faster than loading out/ module by module
    await bundle('cli', resolve(root, 'server/src/cli/main.ts'), 'dist/cli.js', []);
    codeCache();
    if (only === 'cli') {
      // `poise lsp` runs the bundled server (bin/poise.js)
      await bundle('server', serverEntry, 'dist/server.js', []);
      process.exit(0);
    }
  }
  await bundle('client', clientEntry, 'dist/extension.js', ['vscode']);
  if (!existsSync(serverEntry)) {
    console.error(
      `bundle: the language server entry ${serverEntry} does not exist (yet).\n` +
        '        It is written separately; until then set POISE_SERVER_ENTRY=path/to/entry.ts to bundle another file.',
    );
    process.exit(1);
  }
  await bundle('server', serverEntry, 'dist/server.js', []);
} catch (e) {
  // esbuild has already printed the errors with their locations
  console.error(`bundle: failed: ${e instanceof Error ? e.message.split('\n')[0] : e}`);
  process.exit(1);
}
