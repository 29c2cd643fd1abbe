/** The `poise` settings the server reads (workspace/configuration section `poise`). */

export interface PoiseSettings {
  /** Significant digits of generated numbers (linear blocks, solved values, hovers). */
  digits: number;
  /** Point used for equation hovers; '' means the first point of the file. */
  activePoint: string;
  /** Warn about declared names no equation uses (P203). */
  warnUnused: boolean;
}

export const DEFAULT_SETTINGS: Readonly<PoiseSettings> = { digits: 4, activePoint: '', warnUnused: true };

/** Settings from whatever the client sent, with defaults for missing or unusable values. */
export function sanitizeSettings(raw: unknown): PoiseSettings {
  const r = (raw && typeof raw === 'object' ? raw : {}) as Record<string, unknown>;
  const d = typeof r.digits === 'number' && Number.isFinite(r.digits) ? Math.min(17, Math.max(1, Math.round(r.digits))) : DEFAULT_SETTINGS.digits;
  return {
    digits: d,
    activePoint: typeof r.activePoint === 'string' ? r.activePoint.trim() : DEFAULT_SETTINGS.activePoint,
    warnUnused: typeof r.warnUnused === 'boolean' ? r.warnUnused : DEFAULT_SETTINGS.warnUnused,
  };
}
