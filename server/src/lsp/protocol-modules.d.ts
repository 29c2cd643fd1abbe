// The root tsconfig resolves modules the classic Node way, which ignores the "exports" maps the protocol
// libraries use for their `/node` entry points; its "paths" map `vscode-languageserver/node` and
// `vscode-jsonrpc/node`, and these declarations cover the entry points those two re-export.
// Types only: at run time Node follows the exports maps itself.
declare module 'vscode-languageserver-protocol/node' {
  export * from 'vscode-languageserver-protocol/lib/node/main';
}
declare module 'vscode-languageserver-protocol' {
  export * from 'vscode-languageserver-protocol/lib/common/api';
}
declare module 'vscode-jsonrpc' {
  export * from 'vscode-jsonrpc/lib/common/api';
}
