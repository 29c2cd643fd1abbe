/** The language server's source host: the open documents (their unsaved text) first, then the disk for file: URIs. */
import * as fs from 'fs';
import { fileURLToPath } from 'url';
import type { TextDocuments } from 'vscode-languageserver/node';
import type { TextDocument } from 'vscode-languageserver-textdocument';
import { layeredHost, type SourceHost } from '../core/sources';

export function openDocumentsHost(documents: TextDocuments<TextDocument>): SourceHost {
  return { read: (uri) => documents.get(uri)?.getText() };
}

export const fileUriHost: SourceHost = {
  read(uri) {
    if (!uri.startsWith('file:')) return undefined;
    try {
      return fs.readFileSync(fileURLToPath(uri), 'utf8');
    } catch {
      return undefined;
    }
  },
};

export function serverSources(documents: TextDocuments<TextDocument>): SourceHost {
  return layeredHost(openDocumentsHost(documents), fileUriHost);
}
