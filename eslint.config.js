// Type-aware linting with typescript-eslint's strict rule set (formatting is Prettier's job). Where a rule is
// relaxed, the reason stands beside it.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';

export default tseslint.config(
  {
    ignores: [
      'dist/**',
      'data/**',
      'coverage/**',
      '.tmp/**',
      'node_modules/**',
      'docs/**',
      'apps/web/src/generated/**',
    ],
  },
  js.configs.recommended,
  ...tseslint.configs.strictTypeChecked,
  {
    languageOptions: {
      parserOptions: {
        projectService: { allowDefaultProject: ['eslint.config.js', 'apps/web/vite.config.ts'] },
        tsconfigRootDir: import.meta.dirname,
      },
    },
    rules: {
      // Numbers and booleans read naturally in messages; objects and nullish values still may not be interpolated.
      '@typescript-eslint/restrict-template-expressions': ['error', { allowNumber: true, allowBoolean: true }],
      // Typed-array and Map code asserts invariants the checker cannot see (an index inside its bounds, a key set a
      // line above); `noUncheckedIndexedAccess` is off for the same reason, so the assertion is the honest marker.
      '@typescript-eslint/no-non-null-assertion': 'off',
      // `onClick={() => setOpen(true)}` is the idiom of the screens.
      '@typescript-eslint/no-confusing-void-expression': ['error', { ignoreArrowShorthand: true }],
      // Nest modules are empty classes that carry a decorator.
      '@typescript-eslint/no-extraneous-class': ['error', { allowWithDecorator: true }],
      // Nest and TypeORM type their option bags and DTOs as classes and document building them as object literals.
      '@typescript-eslint/no-unsafe-class-instance-assignment': 'off',
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
    },
  },
  {
    // Tests read JSON answers as `any` (their helpers declare it so) and let `expect` check their shape; typing each
    // answer would only restate the assertion beside it.
    files: ['test/**/*.ts', '**/*.spec.ts'],
    rules: {
      '@typescript-eslint/no-explicit-any': 'off',
      '@typescript-eslint/no-unsafe-member-access': 'off',
      '@typescript-eslint/no-unsafe-assignment': 'off',
      '@typescript-eslint/no-unsafe-argument': 'off',
      '@typescript-eslint/no-unsafe-call': 'off',
      '@typescript-eslint/no-unsafe-return': 'off',
      // Test doubles stand in for async interfaces (stream sources as async generators, hooks, polled conditions)
      // and answer at once; an await in them would be there only for the rule.
      '@typescript-eslint/require-await': 'off',
    },
  },
  { files: ['**/*.js'], ...tseslint.configs.disableTypeChecked },
);
