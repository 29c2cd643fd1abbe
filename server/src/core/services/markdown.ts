/**
 * Text from the model (unit texts, names in messages) placed into Markdown: every character Markdown or
 * HTML could read as markup is escaped (CommonMark 0.31 §2.4: any ASCII punctuation may be backslash-
 * escaped), so that a unit such as `m*s` is not read as emphasis and `[<img …>]` is shown as text. Pure.
 */
export function escapeMarkdown(text: string): string {
  return text.replace(/[\\`*_{}[\]()<>#+!|~&]/g, (c) => '\\' + c);
}
