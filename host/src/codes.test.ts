// docs/codes.md against codes.ts: each table in the document is the one codes.ts gives, row for
// row, so a code added, renamed or reworded in one place and not the other fails here. Also the
// unions are what the compiler checks: the constants map each code to itself.

import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import ts from "typescript";
import { describe, expect, it } from "vitest";
import {
  CAUTION_MEANINGS, CautionCode, ERROR_GROUPS, ErrorCode, NO_USABLE_RING, PART_FAULT_MEANINGS, PartFaultCode,
  WARNING_MEANINGS, WarningCode, isAnalysisFailure,
} from "./codes.ts";
import { codesTables } from "../../test/docs/codes-tables.ts";

const doc = readFileSync(new URL("../../docs/codes.md", import.meta.url), "utf8");

describe("codes", () => {
  it("docs/codes.md holds each table codes.ts gives, in order", () => {
    let at = 0;
    for (const t of codesTables()) {
      const i = doc.indexOf(t, at);
      expect(i, `docs/codes.md lacks (or has out of order) this table:\n${t}`).toBeGreaterThanOrEqual(0);
      at = i + t.length;
    }
    // No row in the document that codes.ts does not give.
    const rows = doc.split("\n").filter((l) => /^\| `[A-Za-z_ -]+` \|/.test(l));
    expect(rows.length).toBe(codesTables().join("\n").split("\n").filter((l) => l.startsWith("| `")).length);
  });

  it("each constant is its own code, each error code belongs to one group", () => {
    for (const [table, constants] of [[WARNING_MEANINGS, WarningCode], [CAUTION_MEANINGS, CautionCode], [PART_FAULT_MEANINGS, PartFaultCode]] as const) {
      expect(Object.entries(constants)).toEqual(Object.keys(table).map((k) => [k, k]));
    }
    const all = Object.values(ERROR_GROUPS).flatMap((g) => Object.keys(g));
    expect(new Set(all).size).toBe(all.length);
    expect(Object.keys(ErrorCode).sort()).toEqual([...all].sort());
  });

  it("the no-usable-ring codes are analysis failures, and every analysis failure is one or BAD_INPUT", () => {
    for (const c of NO_USABLE_RING) expect(isAnalysisFailure(c)).toBe(true);
    expect(Object.keys(ERROR_GROUPS.analysis).filter((c) => !NO_USABLE_RING.includes(c as ErrorCode))).toEqual(["BAD_INPUT"]);
  });

  it("the compiler refuses a code that is not in its union, where codes are made and where they are matched", () => {
    const codes = fileURLToPath(new URL("./codes.ts", import.meta.url));
    const coded = fileURLToPath(new URL("./coded-error.ts", import.meta.url));
    const types = fileURLToPath(new URL("./analysis/types.ts", import.meta.url));
    const file = join(mkdtempSync(join(tmpdir(), "henrytick-codes-")), "use.ts");
    writeFileSync(file, `
import { ErrorCode, WarningCode } from ${JSON.stringify(codes)};
import { CodedError } from ${JSON.stringify(coded)};
import type { Warning } from ${JSON.stringify(types)};
const fine: Warning = { code: WarningCode.POOR_FIT, message: "" };
const typo: Warning = { code: "POOR_FITT", message: "" };
new CodedError("NO_RIGN", "x");
declare const e: CodedError;
if (e.code === "NO_RIGN") console.log(fine, typo, ErrorCode.NO_RING);
`);
    const program = ts.createProgram([file], {
      module: ts.ModuleKind.NodeNext, moduleResolution: ts.ModuleResolutionKind.NodeNext, target: ts.ScriptTarget.ES2022, strict: true, noEmit: true,
      allowImportingTsExtensions: true, types: [], skipLibCheck: true,
    });
    const errors = ts.getPreEmitDiagnostics(program).filter((d) => d.file?.fileName === file).map((d) => d.file!.getLineAndCharacterOfPosition(d.start!).line);
    expect(errors).toEqual([5, 6, 8]); // the typo'd warning, the made-up error code, the mistyped match
  });
});
