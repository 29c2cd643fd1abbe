/**
 * Modules that add custom requests to the language server with `registerRequest` (see registry.ts).
 * Import them here, e.g. `import '../report/lspReport';`: server.ts imports this file, so every entry
 * point (the bundled dist/server.js and `poise lsp --stdio`) gets them. Poise's own requests are typed in
 * requests.ts and registered by customRequests.ts.
 */
export {};
