// ESLint flat config: code checks for every TypeScript/JavaScript source, plus the layering
// rules that keep the architecture (app → server → engine, models below server) honest.
import js from "@eslint/js";
import { defineConfig, globalIgnores } from "eslint/config";
import jsxA11y from "eslint-plugin-jsx-a11y";
import reactHooks from "eslint-plugin-react-hooks";
import globals from "globals";
import tseslint from "typescript-eslint";

// Layering is checked on the import specifier as written (core `no-restricted-imports`, regex
// patterns), so it catches `#app/...`, bare `app/...` (tsconfig baseUrl) and relative
// `../../app/...` alike, even for a file that does not exist yet. `import-x/no-restricted-paths`
// was not used: it skips every import it cannot resolve, and `node:` builtins never resolve.

/** `#dir/…`, `dir/…` or `../…/dir/…`: a specifier that reaches the top-level folder `dir`. */
function reaching(dir) {
  return `^(?:#${dir}|${dir}|(?:\\./)?(?:\\.\\./)+${dir})(?:/|$)`;
}

/** The same for `server/<sub>`, which files inside server/ also reach as `../<sub>`. */
function reachingServer(sub) {
  return `^(?:#server/|server/|(?:\\./)?(?:\\.\\./)+(?:server/)?)${sub}(?:/|$)`;
}

const rule = (regex, message, why) => ({ regex, message: `${message} (layering: ${why})` });
const APP_SERVER_ENGINE = "app → server → engine";

const serverRules = [rule(reaching("app"), "server/ must not import from app/", APP_SERVER_ENGINE)];
const servicesRules = [
  ...serverRules,
  rule(reachingServer("cli"), "server/services/ and server/analysis/ must not import server/cli/", "services sit beside the CLI"),
  rule(reachingServer("http"), "server/services/ and server/analysis/ must not import server/http/", "services sit below the HTTP layer"),
];
const modelsRules = [
  rule(reaching("app"), "models/ must not import from app/", APP_SERVER_ENGINE),
  // The engine is the bottom layer: a model may name its types (a revision's document is a DeviceModel).
  rule(`^(?:#server|server|(?:\\./)?(?:\\.\\./)+server)/(?!engine(?:/|$))`, "models/ must not import from server/ (the engine excepted)", "models sit below server"),
];

const ENGINE = ["server/engine/ may import only zod, luxon and its own files", "the engine is the pure bottom layer"];
/** Engine rules for a file `depth` folders below server/engine/. */
function engineRules(depth) {
  return [
    // Not relative and not zod or luxon: builtins, other packages and every alias.
    rule(`^(?!\\.|(?:zod|luxon)(?:/|$))`, ...ENGINE),
    // Relative, climbing above server/engine/.
    rule(`^(?:\\./)?(?:\\.\\./){${depth}}\\.\\.(?:/|$)`, ...ENGINE),
  ];
}

/**
 * One layer's restrictions on static imports and re-exports (`no-restricted-imports`), and the
 * same patterns on `import("…")` and `typeof import("…")`, which that rule does not look at.
 */
function layer(files, patterns, ignores = []) {
  // esquery ends a /regex/ at the first slash, so slashes inside are written \x2F.
  const literal = (regex) => `[source.value=/${regex.replaceAll("/", "\\x2F")}/]`;
  const dynamic = patterns.flatMap(({ regex, message }) => [
    { selector: `ImportExpression${literal(regex)}`, message },
    { selector: `TSImportType${literal(regex)}`, message },
  ]);
  return {
    name: `sallyport/layering ${files.join(", ")}`,
    files,
    ignores,
    rules: {
      "no-restricted-imports": ["error", { patterns }],
      "no-restricted-syntax": ["error", ...dynamic],
    },
  };
}

const SOURCE = "*.{ts,tsx,js,mjs}";

export default defineConfig([
  globalIgnores([
    "build/",
    ".react-router/",
    "node_modules/",
    ".data/",
    "test-results/",
    "playwright-report/",
    "tests/artifacts/",
    "tests/fixtures/",
  ]),
  {
    name: "sallyport/sources",
    files: [`**/${SOURCE}`],
    extends: [js.configs.recommended, tseslint.configs.recommended],
    languageOptions: { globals: { ...globals.node } },
    rules: {
      // `const { id: _id, ...rest } = x` is how the code base drops a field from a copy.
      "@typescript-eslint/no-unused-vars": ["error", { ignoreRestSiblings: true }],
    },
  },
  {
    name: "sallyport/app",
    files: ["app/**/*.{ts,tsx}"],
    languageOptions: { globals: { ...globals.browser } },
  },
  {
    name: "sallyport/react",
    files: ["**/*.tsx"],
    extends: [reactHooks.configs.flat.recommended, jsxA11y.flatConfigs.recommended],
  },
  {
    // Hooks also live in plain .ts modules (app/utils/nonce.ts).
    name: "sallyport/react-hooks-in-ts",
    files: ["app/**/*.ts"],
    extends: [reactHooks.configs.flat.recommended],
  },

  {
    // Every browser test goes through the shared fixture, which fails it on a console error or a failed request.
    name: "sallyport/e2e-fixture",
    files: ["tests/e2e/**/*.spec.ts"],
    rules: {
      "no-restricted-imports": [
        "error",
        { paths: [{ name: "@playwright/test", importNames: ["test"], message: "Import test from ./fixtures: it fails a test on console errors and failed requests." }] },
      ],
    },
  },

  // Layering. A file takes the options of the last block that matches it, so each block lists
  // every restriction for its folder.
  layer([`server/**/${SOURCE}`], serverRules, ["server/engine/**", "server/services/**", "server/analysis/**"]),
  layer([`server/services/**/${SOURCE}`, `server/analysis/**/${SOURCE}`], servicesRules),
  layer([`models/**/${SOURCE}`], modelsRules),
  // The engine's own sub-folders, down to four levels (today: server/engine/testing/).
  ...[0, 1, 2, 3, 4].map((depth) => layer([`server/engine/${"*/".repeat(depth)}${SOURCE}`], engineRules(depth))),
]);
