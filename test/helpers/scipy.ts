/**
 * Runs a Python snippet with NumPy and SciPy (Debian's python3-numpy and python3-scipy, which `.ci/run`
 * installs) and returns its JSON answer. Matrices cross as nested lists.
 */
import { spawnSync } from 'child_process';
import * as fs from 'fs';

const CANDIDATES = ['/usr/bin/python3', 'python3'];

function findPython(): string | undefined {
  for (const py of CANDIDATES) {
    if (py.startsWith('/') && !fs.existsSync(py)) continue;
    const r = spawnSync(py, ['-c', 'import numpy, scipy.signal, scipy.linalg'], { encoding: 'utf8' });
    if (r.status === 0) return py;
  }
  return undefined;
}

export const PYTHON_WITH_SCIPY = findPython();

/** In CI a missing SciPy is a failure (the install step is broken), elsewhere a skip with a message. */
export const SCIPY_REQUIRED = process.env.CI === 'true';

export function runScipy<T>(code: string, input: unknown): T {
  if (!PYTHON_WITH_SCIPY) throw new Error('python3 with numpy and scipy is needed (apt-get install -y python3-numpy python3-scipy)');
  const prelude = 'import json, sys\nimport numpy as np\nimport scipy.signal, scipy.linalg\ninp = json.loads(sys.stdin.read())\n';
  const r = spawnSync(PYTHON_WITH_SCIPY, ['-c', prelude + code], { input: JSON.stringify(input), encoding: 'utf8', maxBuffer: 1 << 28 });
  if (r.status !== 0) throw new Error(`python failed: ${r.stderr}`);
  return JSON.parse(r.stdout) as T;
}

/** Row-major Float64Array → nested lists. */
export function nested(a: Float64Array, rows: number, cols: number): number[][] {
  return Array.from({ length: rows }, (_, i) => Array.from(a.subarray(i * cols, (i + 1) * cols)));
}
