/** The command line's source host: model documents are files on disk, addressed by their paths. */
import * as fs from 'fs';
import { layeredHost, memoryHost, type SourceHost } from '../core/sources';

export const diskHost: SourceHost = {
  read(file) {
    try {
      return fs.readFileSync(file, 'utf8');
    } catch {
      return undefined;
    }
  },
};

/** The disk, with the root file already read (so its read errors are reported once, in the command's words). */
export function cliSources(file: string, text: string): SourceHost {
  return layeredHost(memoryHost({ [file]: text }), diskHost);
}
