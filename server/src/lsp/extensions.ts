/**
 * Modules that add custom requests to the language server with `registerRequest` (see registry.ts).
 * Import them here, e.g. `import './reportRequest';`: server.ts imports this file, so every entry
 * point (the bundled dist/server.js and `poise lsp --stdio`) gets them.
 */
import './reportRequest';
import './sweepRequest';
import './exportRequest';

export {};
