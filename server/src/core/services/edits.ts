/**
 * Text edits in core terms: a span of the analysed text (UTF-16 offsets) and its replacement. The
 * services return these; the language server turns them into LSP TextEdits. Pure.
 */
import type { Span } from '../text';

export interface TextEdit {
  span: Span;
  newText: string;
}

/** Applies non-overlapping edits (any order) to a text. */
export function applyEdits(text: string, edits: readonly TextEdit[]): string {
  const sorted = [...edits].sort((a, b) => a.span.start - b.span.start || a.span.end - b.span.end);
  let out = '';
  let pos = 0;
  for (const e of sorted) {
    if (e.span.start < pos) throw new Error(`overlapping edits at offset ${e.span.start}`);
    out += text.slice(pos, e.span.start) + e.newText;
    pos = e.span.end;
  }
  return out + text.slice(pos);
}

/** The line break the text uses ("\r\n" when its first break is one, else "\n"). */
export function eol(text: string): string {
  const i = text.indexOf('\n');
  return i > 0 && text[i - 1] === '\r' ? '\r\n' : '\n';
}
