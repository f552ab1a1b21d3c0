import path from "node:path";
import { defineConfig } from "vitest/config";

const alias = { "~": path.resolve(__dirname, "../app") };
const root = path.resolve(__dirname, "..");

// Two projects: "unit" (pure code and published references, no server) and "integration"
// (the real built server, a temporary SQLite file, the identity-provider stand-in and the SMTP catcher).
export default defineConfig({
  resolve: { alias },
  test: {
    root,
    testTimeout: 60_000,
    hookTimeout: 180_000,
    projects: [
      {
        resolve: { alias },
        test: {
          name: "unit",
          root,
          include: ["tests/unit/**/*.test.ts", "tests/reference/**/*.test.ts"],
          testTimeout: 120_000,
        },
      },
      {
        resolve: { alias },
        test: {
          name: "integration",
          root,
          include: ["tests/integration/**/*.test.ts"],
          globalSetup: ["tests/integration/global-setup.ts"],
          testTimeout: 60_000,
          hookTimeout: 180_000,
          fileParallelism: false,
        },
      },
      {
        // Each file starts its own PostgreSQL cluster and app processes (several instances on one database).
        resolve: { alias },
        test: {
          name: "postgres",
          root,
          include: ["tests/postgres/**/*.test.ts"],
          testTimeout: 300_000,
          hookTimeout: 300_000,
          fileParallelism: false,
        },
      },
    ],
  },
});
