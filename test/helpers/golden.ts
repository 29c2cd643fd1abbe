/**
 * Golden files: reviewable expected outputs kept under test/golden/.
 *
 * To rewrite them after an intended change of output, run
 *
 *     POISE_UPDATE_GOLDEN=1 npx vitest run
 *
 * and review the diff of test/golden/ before committing. Without the flag a missing or different golden
 * file fails the test (a missing one is never created silently).
 */
import * as fs from 'fs';
import * as path from 'path';
import { expect } from 'vitest';

export const GOLDEN_DIR = path.resolve(__dirname, '..', 'golden');
export const UPDATE_GOLDEN = process.env.POISE_UPDATE_GOLDEN === '1';

/** Compares `actual` with test/golden/NAME (or rewrites it under POISE_UPDATE_GOLDEN=1). */
export function expectGolden(name: string, actual: string): void {
  const file = path.join(GOLDEN_DIR, name);
  const text = actual.replace(/\r\n/g, '\n');
  if (UPDATE_GOLDEN) {
    fs.mkdirSync(path.dirname(file), { recursive: true });
    fs.writeFileSync(file, text);
    return;
  }
  if (!fs.existsSync(file)) throw new Error(`golden file ${path.relative(process.cwd(), file)} is missing: run POISE_UPDATE_GOLDEN=1 npx vitest run and review it`);
  expect(text, `golden file ${name} (rewrite with POISE_UPDATE_GOLDEN=1 after reviewing the change)`).toBe(fs.readFileSync(file, 'utf8'));
}
