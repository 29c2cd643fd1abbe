/**
 * `poise expand FILE`: prints the flat scalar model that a model with indexed families stands for (every
 * family expanded to its elements, each block to its equations), as model text that reads back to the same
 * model — for review and bug reports. Problems in the file are printed as by `poise check` (exit 1).
 */
import { analyzeDocuments } from '../core/pipeline/analysis';
import { cliSources } from './sourceHost';
import { formatDiagnostic } from './where';
import { expandedModelText } from '../core/present/modelText';
import type { Parsed } from './options';
import type { CliHelpers, Io } from './shared';

export async function expandCommand(p: Parsed, io: Io, h: CliHelpers): Promise<number> {
  const file = h.oneFile(p);
  const a = analyzeDocuments(cliSources(file, h.readModel(file)), file)!;
  const errors = a.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) {
    for (const d of errors) io.err(formatDiagnostic(a, file, d));
    return 1;
  }
  io.out(`# ${file} expanded by poise expand: every family written element by element${a.instances.size ? ', every part under its instance\'s name' : ''}`);
  io.out(expandedModelText(a).trimEnd());
  return 0;
}
