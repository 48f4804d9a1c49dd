import { defineConfig } from "vitest/config";

// Kept apart from vite.config.ts so the React Router plugin never runs under Vitest.
export default defineConfig({
  resolve: { tsconfigPaths: true },
  test: {
    projects: [
      {
        extends: true,
        test: {
          name: "unit",
          include: ["tests/unit/**/*.test.ts", "tests/engine/**/*.test.ts"],
          environment: "node",
          // Vitest's default is one worker fewer than the cores: a single one on a 2-core machine.
          // The files share nothing, so both cores work (docs in DEVELOPERS.md, "Tests").
          maxWorkers: 2,
          // The files share no mutable module state (no mocks, no stubbed environment; the engine's
          // caches are keyed by the objects they describe), so each worker imports the sources once
          // instead of once per file: measured 2026-12-03 at load 6–12, 142 s of CPU instead of 202
          // (imports 34 s instead of 99).
          isolate: false,
        },
      },
      {
        extends: true,
        test: {
          name: "integration",
          include: ["tests/integration/**/*.test.ts"],
          environment: "node",
          globalSetup: ["tests/integration/global-setup.ts"],
          // Bounds for a hung test, not speed targets: the suite runs beside the browser suite on 2 cores.
          testTimeout: 60_000,
          hookTimeout: 60_000,
          // One file at a time: two at once against the one app server and its single job runner
          // timed out (30 s) in background-analysis, proposals and others on a loaded 2-core machine.
          fileParallelism: false,
        },
      },
    ],
  },
});
