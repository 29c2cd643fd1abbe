/**
 * The shared reference models, read in place and never copied: ../shared/reference/models/NAME.poise and
 * their linear models in ../shared/reference/NAME.json, computed outside this project (SymPy 1.14
 * restatement in SI, mpmath Newton, NumPy elimination; see ../shared/reference/README.md). Helpers to list
 * them, read the JSON, and find a matrix entry by its row and column names.
 */
import * as fs from 'fs';
import * as path from 'path';
import { REFERENCE } from './cli';

export const REFERENCE_MODELS = path.join(REFERENCE, 'models');

/** A linear model's matrices (arrays of rows) with the names of their rows and columns. */
export interface NamedMatrices {
  states: string[];
  inputs: string[];
  outputs: string[];
  A: number[][];
  B: number[][];
  C: number[][];
  D: number[][];
}

/** One reference JSON file. */
export interface ReferenceModel extends NamedMatrices {
  point: string;
  /** Values at the point in declared units, by name. */
  values: Record<string, number>;
  /** Eigenvalues of A as [re, im]. */
  eig: [number, number][];
}

export type MatrixName = 'A' | 'B' | 'C' | 'D';

/** The reference models' names (NAME of models/NAME.poise), sorted. */
export function referenceNames(): string[] {
  return fs.readdirSync(REFERENCE_MODELS).filter((f) => f.endsWith('.poise')).map((f) => f.replace(/\.poise$/, '')).sort();
}

/** Every reference model: its name, model file and reference JSON file. */
export function referenceModels(): { name: string; file: string; ref: string }[] {
  return referenceNames().map((name) => ({ name, file: path.join(REFERENCE_MODELS, `${name}.poise`), ref: path.join(REFERENCE, `${name}.json`) }));
}

/** Reads one reference JSON file. */
export function readReferenceFile(jsonFile: string): ReferenceModel {
  return JSON.parse(fs.readFileSync(jsonFile, 'utf8')) as ReferenceModel;
}

/** Reads the reference JSON of the model NAME. */
export function readReference(name: string): ReferenceModel {
  return readReferenceFile(path.join(REFERENCE, `${name}.json`));
}

/** Row and column names of a matrix: A states×states, B states×inputs, C outputs×states, D outputs×inputs. */
export function matrixNames(m: Pick<NamedMatrices, 'states' | 'inputs' | 'outputs'>, which: MatrixName): [string[], string[]] {
  switch (which) {
    case 'A': return [m.states, m.states];
    case 'B': return [m.states, m.inputs];
    case 'C': return [m.outputs, m.states];
    case 'D': return [m.outputs, m.inputs];
  }
}

/** A row of a matrix by the row's name; throws when the name is not among the rows. */
export function rowByName(m: NamedMatrices, which: MatrixName, row: string): number[] {
  const i = matrixNames(m, which)[0].indexOf(row);
  if (i < 0) throw new Error(`${which} has no row "${row}"`);
  return m[which][i];
}

/** An entry of a matrix by its row and column names; throws when a name is not there. */
export function entryByName(m: NamedMatrices, which: MatrixName, row: string, col: string): number {
  const j = matrixNames(m, which)[1].indexOf(col);
  if (j < 0) throw new Error(`${which} has no column "${col}"`);
  return rowByName(m, which, row)[j];
}
