/**
 * The example models of examples/ for the tests that go over all of them: every `.poise` file, in
 * subfolders too (examples/feed_header/plant.poise), except the files of a parts library, which hold only
 * `part` blocks and `parts` lines and are no model by themselves (they are read through the models that
 * bring them in). Analyses go through the command line's disk host, so the files a model names beside it
 * (parts files, a table's CSV) are read as `poise` reads them.
 */
import * as fs from 'fs';
import * as path from 'path';
import { analyzeDocuments, type Analysis, type AnalyzeOptions } from '../../server/src/core/pipeline/analysis';
import { parse } from '../../server/src/core/syntax/parser';
import { cliSources } from '../../server/src/cli/sourceHost';
import { EXAMPLES } from './cli';

export interface ExampleModel {
  /** The path under examples/, '/' separated: `buffer_tank.poise`, `feed_header/plant.poise`. */
  name: string;
  /** The absolute path. */
  file: string;
  text: string;
}

/** Every `.poise` file under `dir`, subfolders included, sorted by path. */
export function poiseFiles(dir = EXAMPLES): string[] {
  const out: string[] = [];
  const walk = (d: string) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const p = path.join(d, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.name.endsWith('.poise')) out.push(p);
    }
  };
  walk(dir);
  return out.sort();
}

/** Whether a text is a file of parts only (part blocks and parts lines): a library file, no model by itself. */
export function partsOnly(text: string): boolean {
  const sts = parse(text).file.statements;
  return sts.length > 0 && sts.every((s) => s.kind === 'part' || s.kind === 'parts');
}

/** Every example model (subfolders included, parts-library files left out), sorted by path. */
export function exampleModels(dir = EXAMPLES): ExampleModel[] {
  return poiseFiles(dir)
    .map((file) => ({ name: path.relative(dir, file).split(path.sep).join('/'), file, text: fs.readFileSync(file, 'utf8') }))
    .filter((m) => !partsOnly(m.text));
}

/** The analysis of a model file (or of `text` in its place), the files beside it read from the disk. */
export function analyzeFile(file: string, text = fs.readFileSync(file, 'utf8'), options: AnalyzeOptions = {}): Analysis {
  return analyzeDocuments(cliSources(file, text), file, options)!;
}
