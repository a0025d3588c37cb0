// The reading's budget and the two-tank correction come from the library (measure/reading-report.ts):
// a program calling measureWithReport gets the very figures `henrytick measure --budget
// --self-cap --json` prints for the same simulated part and seed.

import { describe, expect, it } from "vitest";
import { measureWithReport, openTester, selfCapacitanceJson } from "../../host/src/index.ts";
import { runCli } from "./run-cli.ts";

describe("a reading with its budget, from the library as from the command line", () => {
  it("gives the same result, budget and self-capacitance as measure --self-cap --budget --json", async () => {
    const cli = runCli(["measure", "--sim", "crystal-set-coil-300u", "--seed", "5", "--self-cap", "--budget", "--json", "--uncalibrated"]);
    expect(cli.status, cli.stderr).toBe(0);
    const printed = JSON.parse(cli.stdout);
    const tester = await openTester({ scenario: "crystal-set-coil-300u", seed: 5 });
    try {
      const report = await measureWithReport(tester.client, { self_capacitance: true, label: "crystal-set-coil-300u" });
      expect(report.result.inductance_h).toBe(printed.inductance_h);
      expect(report.budget).toEqual(printed.budget);
      expect(report.budget.measurand).toBe("corrected");
      expect(selfCapacitanceJson(report.self_capacitance!)).toEqual(printed.self_capacitance);
    } finally {
      await tester.close();
    }
  });

  it("without the two-tank reading, the budget is the one-tank budget of the apparent inductance", async () => {
    const cli = JSON.parse(runCli(["measure", "--sim", "--seed", "3", "--budget", "--json", "--uncalibrated"]).stdout);
    const tester = await openTester({ scenario: undefined, seed: 3 });
    try {
      const report = await measureWithReport(tester.client, {});
      expect(report.budget).toEqual(cli.budget);
      expect(report.budget.measurand).toBe("apparent");
      expect(report.self_capacitance).toBeUndefined();
    } finally {
      await tester.close();
    }
  });
});
