import path from 'node:path';
import { Linter } from 'eslint';
import tseslint from 'typescript-eslint';
import { describe, expect, it } from 'vitest';
import boundaries from '../../scripts/eslint/boundaries.js';

const root = path.resolve(import.meta.dirname, '..', '..');

function lint(file: string, code: string): string[] {
  const linter = new Linter({ configType: 'flat' });
  const messages = linter.verify(
    code,
    [
      {
        files: ['**/*.ts', '**/*.tsx'],
        languageOptions: { parser: tseslint.parser as Linter.Parser },
        plugins: { liftwise: boundaries },
        rules: { 'liftwise/import-directions': 'error' },
      },
    ],
    path.join(root, file),
  );
  return messages.map((m) => m.message);
}

describe('import directions of ARCHITECTURE.md', () => {
  it.each([
    ['src/features/runs/RunsPage.tsx', "import { x } from '../../../server/app.ts';", 'never server/'],
    ['server/routes/runs.ts', "import { x } from '../../src/lib/api.ts';", 'never the client'],
    ['shared/api/x.ts', "import { x } from '../../server/config.ts';", 'imports neither'],
    ['server/science/qg/solver.ts', "import { x } from '../../db/client.ts';", 'pure numerics'],
    ['server/ingest/grib2/reader.ts', "import { x } from '../../services/runs.ts';", 'no database'],
    ['server/routes/runs.ts', "import { x } from '../db/client.ts';", 'routes call services'],
    ['src/features/runs/RunsPage.tsx', "import { x } from '@/features/admin/AdminPage.tsx';", 'may not import the internals'],
  ])('%s: %s is refused', (file, code, fragment) => {
    const messages = lint(file, code);
    expect(messages).toHaveLength(1);
    expect(messages[0]).toContain(fragment);
  });

  it.each([
    ['src/features/runs/RunsPage.tsx', "import { x } from '@shared/cautions.ts'; import { y } from '@/components/Page.tsx';"],
    ['server/routes/health.ts', "import { x } from '../services/health.ts';"],
    ['server/services/health.ts', "import { x } from '../db/client.ts';"],
    ['server/science/qg/solver.ts', "import { x } from '../constants.ts';"],
    ['src/features/runs/components/Table.tsx', "import { x } from '../api.ts';"],
  ])('%s: %s is allowed', (file, code) => {
    expect(lint(file, code)).toEqual([]);
  });
});
