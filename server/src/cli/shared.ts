/**
 * What the `poise` subcommands share with the command's entry (main.ts): the output streams and the
 * helpers main.ts hands to each subcommand. Kept apart so that the subcommands (report.ts, sweep.ts) do
 * not import main.ts, which imports them.
 */
import type { Analysis } from '../core/pipeline/analysis';
import type { Diagnostic } from '../core/diagnostics';
import type { Parsed, UsageError } from './options';

export interface Io {
  out(s: string): void;
  err(s: string): void;
}

export interface CliHelpers {
  /** The text of a model file; a UsageError when it cannot be read. */
  readModel(file: string): string;
  /** Loads, analyses and picks the point; prints errors and returns undefined when the job cannot go on. */
  prepare(file: string, pointName: string | undefined, io: Io): { a: Analysis; point: string } | undefined;
  /** The value of an option; a UsageError when it was given without one. */
  opt(p: Parsed, name: string): string | undefined;
  /** Every value of a repeatable option. */
  all(p: Parsed, name: string): string[];
  /** --digits, or the fallback. */
  digitsOf(p: Parsed, fallback: number): number;
  /** The one model file of the command; a UsageError otherwise. */
  oneFile(p: Parsed): string;
  /** "file:line:col: severity CODE: message", the one form of a located message. */
  formatDiagnostic(a: Analysis, file: string, d: Diagnostic): string;
  UsageError: typeof UsageError;
}
