import tseslint from 'typescript-eslint';

export default tseslint.config(
  { ignores: ['dist/**', 'node_modules/**', 'sample-workspace/**', '**/*.js', '**/*.mjs'] },
  ...tseslint.configs.recommended,
  {
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
    },
  },
  {
    // The core and the webview must stay free of the editor API: the core is shared by the
    // CLI, and the webview only renders what the host sends it.
    files: ['extension/core/**/*.ts', 'extension/protocol/**/*.ts', 'webview/**/*.ts'],
    rules: {
      'no-restricted-imports': ['error', { paths: [{ name: 'vscode', message: 'core, protocol and webview must not import vscode' }] }],
    },
  },
  {
    // The core is shared with the CLI and workers: no DOM either.
    files: ['extension/core/**/*.ts'],
    rules: {
      'no-restricted-globals': ['error', 'document', 'window', 'navigator'],
    },
  },
);
