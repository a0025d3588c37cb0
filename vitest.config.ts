import { defineConfig } from "vitest/config";

export default defineConfig({
  test: {
    include: ["host/src/**/*.test.ts", "shared-protocol/test/**/*.test.ts", "firmware/test/**/*.test.ts", "test/**/*.test.ts"],
    testTimeout: 60000,
    hookTimeout: 60000,
  },
});
