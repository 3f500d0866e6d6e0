/**
 * The import boundaries of eslint.config.js hold: each case lints one import line as if it stood
 * in a file at `file` and expects the rule named (or none). If the import resolver stopped
 * resolving, import/no-restricted-paths would pass everything silently: the cases that expect an
 * error catch that.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { ESLint } from 'eslint';

let eslint: ESLint;
beforeAll(() => {
  eslint = new ESLint({ cwd: process.cwd() });
});

async function rulesHit(file: string, code: string): Promise<string[]> {
  const [result] = await eslint.lintText(`${code}\nexport const used = x;\n`, { filePath: file });
  return result.messages.map((m) => m.ruleId ?? m.message).filter((r) => r !== '@typescript-eslint/no-unused-vars');
}

const cases: { file: string; code: string; rule: string | null }[] = [
  // the pure core: no Node built-ins, no I/O packages, no other server code
  { file: 'server/science/example.ts', code: "import x from 'node:fs';", rule: 'import/no-nodejs-modules' },
  { file: 'server/science/example.ts', code: "import { Worker as x } from 'node:worker_threads';", rule: 'import/no-nodejs-modules' },
  { file: 'server/science/example.ts', code: "import x from 'knex';", rule: 'no-restricted-imports' },
  { file: 'server/science/example.ts', code: "import { safeCsv as x } from '../lib/csv.js';", rule: 'import/no-restricted-paths' },
  { file: 'server/science/example.ts', code: "import { queryDiscNest as x } from './healpix.js';", rule: null },
  // capabilities meet only through service.ts (auth: also roles.ts)
  { file: 'server/masks/example.ts', code: "import { runCellsInWorkers as x } from '../tomography/pool.js';", rule: 'import/no-restricted-paths' },
  { file: 'server/masks/example.ts', code: "import { sendCells as x } from '../tomography/service.js';", rule: null },
  { file: 'server/tomography/example.ts', code: "import { maskCells as x } from '../masks/mask.js';", rule: 'import/no-restricted-paths' },
  { file: 'server/review/example.ts', code: "import { guard as x } from '../auth/roles.js';", rule: null },
  { file: 'server/review/example.ts', code: "import { hashPassword as x } from '../auth/passwords.js';", rule: 'import/no-restricted-paths' },
  { file: 'server/catalog/example.ts', code: "import { whereStarVisible as x } from '../lib/visibility.js';", rule: null },
  // shared plumbing imports no capability
  { file: 'server/lib/example.ts', code: "import { catalogService as x } from '../catalog/service.js';", rule: 'import/no-restricted-paths' },
  // client: features apart, app → features → shared, server only through @science
  { file: 'src/features/review/example.ts', code: "import { batchesQuery as x } from '../intake/api/batches';", rule: 'import/no-restricted-paths' },
  { file: 'src/lib/example.ts', code: "import { starQuery as x } from '../features/catalog/api/star';", rule: 'import/no-restricted-paths' },
  { file: 'src/features/catalog/example.ts', code: "import { NAV as x } from '../../app/nav';", rule: 'import/no-restricted-paths' },
  { file: 'src/features/catalog/example.ts', code: "import { measurementService as x } from '../../../server/measurements/service';", rule: 'no-restricted-imports' },
  { file: 'src/features/catalog/example.ts', code: "import { ang2pixNest as x } from '@science/healpix';", rule: null },
];

describe('import boundaries (eslint.config.js)', () => {
  for (const c of cases) {
    it(`${c.file}: ${c.code} → ${c.rule ?? 'allowed'}`, async () => {
      const hit = await rulesHit(c.file, c.code);
      if (c.rule === null) expect(hit).toEqual([]);
      else expect(hit).toContain(c.rule);
    });
  }
});
