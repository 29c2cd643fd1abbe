/** Shared by the custom requests: the open document's analysis and the point a request names. */
import type { ServerContext } from './registry';

/** The file name of a document URI, for messages. */
export function fileName(uri: string): string {
  const last = uri.replace(/[?#].*$/, '').split('/').pop() ?? uri;
  try {
    return decodeURIComponent(last);
  } catch {
    return last;
  }
}

/**
 * The analysis of the open document and the point a request names; an empty or missing point means the
 * `poise.activePoint` setting, else the first point. Throws an Error saying what is wrong.
 */
export async function documentPoint(ctx: ServerContext, method: string, params: { uri?: unknown; point?: unknown } | undefined) {
  if (!params || typeof params.uri !== 'string') throw new Error(`${method} needs {uri, point}`);
  const a = ctx.analysis(params.uri);
  if (!a) throw new Error(`${fileName(params.uri)} is not open in the editor`);
  const settings = await ctx.settings(params.uri);
  const names = a.pointNames;
  const asked = typeof params.point === 'string' ? params.point.trim() : '';
  const point = asked || (settings.activePoint && names.includes(settings.activePoint) ? settings.activePoint : names[0]);
  if (!point) throw new Error(`${fileName(params.uri)} has no point: add a "point NAME:" block`);
  if (!names.includes(point)) throw new Error(`${fileName(params.uri)} has no point named "${point}"`);
  // the document may have changed while the settings were fetched
  return { a: ctx.analysis(params.uri) ?? a, point, settings };
}
