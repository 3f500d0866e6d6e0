// ESLint flat config. General rules stay modest (recommended sets, without type information);
// the point is the import boundaries below, which hold because lint fails when one is crossed.
// DEVELOPERS.md ("Boundaries") explains them and how to add a check.
import { readdirSync } from 'node:fs';
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import importPlugin from 'eslint-plugin-import';
import globals from 'globals';

// React's hook rules, once eslint-plugin-react-hooks is installed (asked for in PACKAGES-WANTED);
// the client's `eslint-disable … react-hooks/exhaustive-deps` comments need its rule names.
const reactHooks = await import('eslint-plugin-react-hooks').then((m) => m.default ?? m).catch(() => null);

const subfolders = (dir) =>
  readdirSync(new URL(`./${dir}/`, import.meta.url), { withFileTypes: true })
    .filter((d) => d.isDirectory())
    .map((d) => d.name)
    .sort();

// ---------------------------------------------------------------------------------------------
// Client: features never import each other; the flow is app → features → shared.

const FEATURES = subfolders('src/features');
const clientZones = [
  ...FEATURES.map((feature) => ({
    target: `./src/features/${feature}`,
    from: './src/features',
    except: [`./${feature}`],
    message: `A feature does not import another feature: move what both need to src/components/ui or src/lib (src/features/${feature}).`,
  })),
  {
    target: ['./src/components', './src/lib'],
    from: ['./src/features', './src/app'],
    message: 'Shared client code (src/components/ui, src/lib) imports neither features nor the app.',
  },
  {
    target: './src/features',
    from: './src/app',
    message: 'Features do not import the app (router, layout, providers): the flow is app → features → shared.',
  },
  {
    target: './src',
    from: './server',
    except: ['./science'],
    message: 'The client reaches server code only through the @science/* alias (pure science: no Node, no I/O).',
  },
];

// ---------------------------------------------------------------------------------------------
// Server: the pure core and the capabilities.

/**
 * Not capabilities. lib and science: what every capability may import. openapi: assembles the
 * document from every capability's route declarations, so it may read them all.
 */
const SERVER_SHARED = new Set(['lib', 'science', 'openapi']);
const CAPABILITIES = subfolders('server').filter((d) => !SERVER_SHARED.has(d));
/**
 * What a capability may import from another one: its service (public functions) and, for auth,
 * the role guard and the signed-in person's type, which every capability needs.
 */
const PUBLIC_FILES = { auth: ['./service.ts', './roles.ts'] };

const serverZones = [
  {
    target: './server/science',
    from: './server',
    except: ['./science'],
    message: 'server/science is the pure core: it imports only server/science and pure packages.',
  },
  ...CAPABILITIES.map((cap) => ({
    target: './server/lib',
    from: `./server/${cap}`,
    except: cap === 'auth' ? ['./roles.ts'] : [],
    message: 'server/lib is shared plumbing: it imports no capability (only the role guard, server/auth/roles.ts).',
  })),
  ...CAPABILITIES.flatMap((cap) =>
    CAPABILITIES.filter((other) => other !== cap).map((other) => ({
      target: `./server/${cap}`,
      from: `./server/${other}`,
      except: PUBLIC_FILES[other] ?? ['./service.ts'],
      message: `A capability imports another only through its service (${(PUBLIC_FILES[other] ?? ['./service.ts']).map((f) => `server/${other}/${f.slice(2)}`).join(', ')}); move shared pieces to server/lib.`,
    })),
  ),
];

// Packages the pure core must not reach (Node built-ins are caught by import/no-nodejs-modules).
const NOT_IN_SCIENCE = ['express', 'knex', 'better-sqlite3', 'multer', 'passport', 'nodemailer', 'fs', 'fs/promises'];

export default tseslint.config(
  {
    ignores: ['dist/**', 'node_modules/**', 'coverage/**', 'bench/tmp/**', 'tests/e2e/screenshots/**', 'src/lib/api/schema.gen.ts'],
  },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    plugins: { import: importPlugin },
    languageOptions: { ecmaVersion: 2023, sourceType: 'module', globals: { ...globals.node } },
    settings: {
      'import/resolver': { typescript: { project: './tsconfig.json' }, node: true },
      'import/extensions': ['.ts', '.tsx', '.js', '.mjs'],
    },
    rules: {
      // Set to what the code base already meets; they say nothing about boundaries.
      '@typescript-eslint/no-explicit-any': 'off',
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none', ignoreRestSiblings: true }],
      '@typescript-eslint/no-unused-expressions': ['error', { allowShortCircuit: true, allowTernary: true }],
      // Published coefficients are quoted with all their source's digits (server/science/chi2.ts).
      'no-loss-of-precision': 'off',
      'no-empty': ['error', { allowEmptyCatch: true }],
      'import/no-restricted-paths': ['error', { zones: [...clientZones, ...serverZones] }],
    },
  },
  {
    // tests feed hostile input on purpose (NUL and other control characters in patterns)
    files: ['tests/**/*.ts'],
    rules: { 'no-control-regex': 'off' },
  },
  {
    files: ['src/**/*.{ts,tsx}', 'server/openapi/docs/**/*.js'],
    languageOptions: { globals: { ...globals.browser } },
  },
  ...(reactHooks
    ? [{ files: ['src/**/*.tsx', 'src/**/*.ts'], plugins: { 'react-hooks': reactHooks }, rules: { 'react-hooks/rules-of-hooks': 'error', 'react-hooks/exhaustive-deps': 'warn' } }]
    : []),
  {
    files: ['src/**/*.{ts,tsx}'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            {
              regex: '^(\\.\\./)+server(/|$)',
              message: 'Import pure science through the @science/* alias, never by a relative path into server/.',
            },
          ],
        },
      ],
    },
  },
  {
    files: ['server/science/**/*.ts'],
    rules: {
      'import/no-nodejs-modules': 'error',
      'no-restricted-imports': [
        'error',
        {
          paths: NOT_IN_SCIENCE.map((name) => ({ name, message: 'server/science is the pure core (no Node, no Express, no Knex, no fs); put I/O in a capability.' })),
          patterns: [{ group: ['node:*'], message: 'server/science is the pure core: no Node built-ins (worker plumbing lives in server/lib/workers.ts).' }],
        },
      ],
    },
  },
);
