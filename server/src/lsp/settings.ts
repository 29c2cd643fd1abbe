/** The `poise` settings the server reads (workspace/configuration section `poise`). */

export interface PoiseSettings {
  /** Significant digits of generated numbers (linear blocks, solved values, hovers). */
  digits: number;
  /** Point used for equation hovers; '' means the first point of the file. */
  activePoint: string;
  /** Warn about declared names no equation uses (P203). */
  warnUnused: boolean;
  /** Sample time of the report's sampled-data section ("15[s]", or a number in the model's time unit); '' for none. */
  reportSampleTime: string;
  /** Add the smaller-model section (balanced truncation) to the report. */
  reportReduce: boolean;
  /** How the report's sampled-data section holds the input between samples. */
  reportHold: 'zoh' | 'foh' | 'tustin';
  /** Input delay of the report's sampled-data section, as a fraction of a sample in [0, 1) (zero-order hold only). */
  reportDelay: number;
  /** Latin hypercube samples of the toleranced constants for the hovers and the report (0: first-order bands only). */
  toleranceSamples: number;
}

export const DEFAULT_SETTINGS: Readonly<PoiseSettings> = {
  digits: 4, activePoint: '', warnUnused: true, reportSampleTime: '', reportReduce: false, reportHold: 'zoh', reportDelay: 0, toleranceSamples: 500,
};

/** The most tolerance samples the settings may ask for (the command has no such limit). */
export const MAX_TOLERANCE_SAMPLES = 20000;

const HOLDS = ['zoh', 'foh', 'tustin'] as const;

/** A delay fraction from a number (0.3) or a percentage text ("30%"); undefined when it is not in [0, 1). */
function delayFraction(v: unknown): number | undefined {
  let f: number | undefined;
  if (typeof v === 'number') f = v;
  else if (typeof v === 'string') {
    const m = /^\s*([0-9]*\.?[0-9]+(?:e[-+]?\d+)?)\s*(%?)\s*$/i.exec(v);
    if (m) f = Number(m[1]) / (m[2] ? 100 : 1);
  }
  return f !== undefined && Number.isFinite(f) && f >= 0 && f < 1 ? f : undefined;
}

/** Settings from whatever the client sent, with defaults for missing or unusable values. */
export function sanitizeSettings(raw: unknown): PoiseSettings {
  const r = (raw && typeof raw === 'object' ? raw : {}) as Record<string, unknown>;
  const d = typeof r.digits === 'number' && Number.isFinite(r.digits) ? Math.min(17, Math.max(1, Math.round(r.digits))) : DEFAULT_SETTINGS.digits;
  return {
    digits: d,
    activePoint: typeof r.activePoint === 'string' ? r.activePoint.trim() : DEFAULT_SETTINGS.activePoint,
    warnUnused: typeof r.warnUnused === 'boolean' ? r.warnUnused : DEFAULT_SETTINGS.warnUnused,
    reportSampleTime: typeof r.reportSampleTime === 'string' ? r.reportSampleTime.trim() : DEFAULT_SETTINGS.reportSampleTime,
    reportReduce: typeof r.reportReduce === 'boolean' ? r.reportReduce : DEFAULT_SETTINGS.reportReduce,
    reportHold: (HOLDS as readonly unknown[]).includes(r.reportHold) ? (r.reportHold as PoiseSettings['reportHold']) : DEFAULT_SETTINGS.reportHold,
    reportDelay: delayFraction(r.reportDelay) ?? DEFAULT_SETTINGS.reportDelay,
    toleranceSamples: typeof r.toleranceSamples === 'number' && Number.isFinite(r.toleranceSamples) && r.toleranceSamples >= 0
      ? Math.min(MAX_TOLERANCE_SAMPLES, Math.round(r.toleranceSamples)) : DEFAULT_SETTINGS.toleranceSamples,
  };
}

/** How long to wait for workspace/configuration before using the defaults. */
const CONFIG_TIMEOUT_MS = 3000;

function withTimeout<T>(p: Promise<T>, fallback: () => T): Promise<T> {
  return new Promise<T>((resolve) => {
    const timer = setTimeout(() => resolve(fallback()), CONFIG_TIMEOUT_MS);
    p.then(
      (v) => { clearTimeout(timer); resolve(v); },
      () => { clearTimeout(timer); resolve(fallback()); },
    );
  });
}

/**
 * The settings of each document: pulled with workspace/configuration when the client supports it (one
 * pull per document until the settings change), else the ones the client pushed, else the defaults.
 */
export class SettingsStore {
  /** Whether the client answers workspace/configuration. */
  pull = false;
  private global: PoiseSettings = { ...DEFAULT_SETTINGS };
  private readonly pending = new Map<string, Promise<PoiseSettings>>();
  private readonly resolved = new Map<string, PoiseSettings>();
  /** Bumped when the settings change, so that answers to older pulls are not cached. */
  private epoch = 0;

  constructor(private readonly fetch: (scope: { scopeUri?: string; section: string }) => Promise<unknown>) {}

  /** The document's settings (pulled once per document and settings change). */
  for(uri: string): Promise<PoiseSettings> {
    if (!this.pull) return Promise.resolve(this.global);
    let p = this.pending.get(uri);
    if (!p) {
      const epoch = this.epoch;
      p = withTimeout(this.fetch({ scopeUri: uri, section: 'poise' }).then(sanitizeSettings), () => this.global).then((s) => {
        if (epoch === this.epoch) this.resolved.set(uri, s); // not when the settings changed meanwhile
        return s;
      });
      this.pending.set(uri, p);
    }
    return p;
  }

  /** Settings without waiting: the last ones pulled for the document, else the global ones. */
  now(uri: string): PoiseSettings {
    return this.resolved.get(uri) ?? this.global;
  }

  /** The settings changed: `pushed` is what the client sent with the change, if anything. */
  async changed(pushed?: unknown): Promise<void> {
    if (pushed !== undefined) this.global = sanitizeSettings(pushed);
    this.epoch++;
    this.pending.clear();
    this.resolved.clear();
    if (this.pull) this.global = await withTimeout(this.fetch({ section: 'poise' }).then(sanitizeSettings), () => this.global);
  }

  forget(uri: string): void {
    this.pending.delete(uri);
    this.resolved.delete(uri);
  }
}
