import { defineConfig } from "vitest/config";
import { fileURLToPath } from "node:url";

const root = fileURLToPath(new URL(".", import.meta.url));
const resolve = {
  alias: {
    "@/": root,
    // Next's marker module throws outside React Server Components; tests run server code directly.
    "server-only": fileURLToPath(new URL("./tests/support/server-only-stub.ts", import.meta.url)),
  },
};

const LAST = ["tests/integration/faults.test.ts", "tests/integration/logs.test.ts"];

export default defineConfig({
  test: {
    projects: [
      { resolve, test: { name: "unit", include: ["tests/unit/**/*.test.ts"], environment: "node" } },
      {
        resolve,
        test: {
          name: "integration",
          include: ["tests/integration/**/*.test.ts"],
          exclude: [...LAST],
          environment: "node",
          testTimeout: 60_000,
          hookTimeout: 60_000,
          fileParallelism: false,
          sequence: { groupOrder: 1 },
        },
      },
      // After every other integration file, one group each (groups run in groupOrder; vitest does not
      // order files by name): faults stops and restarts services; logs reads the server's whole log.
      ...LAST.map((file, i) => ({
        resolve,
        test: {
          name: `integration-${file.replace(/^.*\/|\.test\.ts$/g, "")}`,
          include: [file],
          environment: "node" as const,
          testTimeout: 60_000,
          hookTimeout: 60_000,
          fileParallelism: false,
          sequence: { groupOrder: 2 + i },
        },
      })),
    ],
  },
});
