import { defineConfig } from "vitest/config";

// Kept apart from vite.config.ts so the router plugin is not loaded into tests.
export default defineConfig({
  resolve: { tsconfigPaths: true },
  test: {
    projects: [
      {
        resolve: { tsconfigPaths: true },
        test: { name: "unit", include: ["tests/unit/**/*.test.ts", "tests/unit/**/*.test.tsx"], environment: "node" },
      },
      {
        resolve: { tsconfigPaths: true },
        test: {
          name: "integration",
          include: ["tests/integration/**/*.test.ts"],
          environment: "node",
          fileParallelism: false,
          testTimeout: 60_000,
          hookTimeout: 60_000,
          globalSetup: ["tests/integration/global-setup.ts"],
        },
      },
    ],
  },
});
