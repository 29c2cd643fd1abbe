/**
 * Where the core reads model documents. The core does no I/O: a shell hands it a host, and an analysis
 * is of a set of documents read through that host, starting from a root document. Document addresses
 * ("uris") are the host's own keys (a file path for the CLI, a document URI for the language server);
 * the core only passes them back to the host.
 *
 * - the language server: open documents first, then the disk (lsp/sourceHost.ts);
 * - the command line: the disk (cli/sourceHost.ts);
 * - tests and `analyze(text)`: an in-memory map (`memoryHost`).
 */

export interface SourceHost {
  /** The text of the document at `uri`; undefined when there is no such document or it cannot be read. */
  read(uri: string): string | undefined;
}

/** The address `analyze(text)` gives its one document. */
export const UNTITLED = 'untitled:model.poise';

/** A host over fixed texts (a record or a map from uri to text). */
export function memoryHost(files: Record<string, string> | ReadonlyMap<string, string>): SourceHost {
  const map = files instanceof Map ? new Map(files) : new Map(Object.entries(files));
  return { read: (uri) => map.get(uri) };
}

/** A host that asks each of `hosts` in turn and answers with the first text found (open documents before the disk). */
export function layeredHost(...hosts: SourceHost[]): SourceHost {
  return {
    read(uri) {
      for (const h of hosts) {
        const t = h.read(uri);
        if (t !== undefined) return t;
      }
      return undefined;
    },
  };
}
