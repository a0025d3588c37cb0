// The tables docs/codes.md holds, built from host/src/codes.ts (host/src/codes.test.ts compares).

import {
  CAUTION_MEANINGS, ERROR_GROUPS, PART_FAULT_MEANINGS, READING_BUDGET_LINES, WARNING_MEANINGS,
} from "../../host/src/codes.ts";

function table(rows: Record<string, string>, group?: string): string {
  const head = group === undefined ? "| code | meaning |\n|---|---|\n" : "| code | group | meaning |\n|---|---|---|\n";
  return head + Object.entries(rows).map(([k, v]) => (group === undefined ? `| \`${k}\` | ${v} |` : `| \`${k}\` | ${group} | ${v} |`)).join("\n");
}

/** The tables docs/codes.md must hold, in order. */
export function codesTables(): string[] {
  const errors = Object.entries(ERROR_GROUPS).map(([g, rows]) => table(rows, g).split("\n"));
  const errorTable = [...errors[0].slice(0, 2), ...errors.flatMap((t) => t.slice(2))].join("\n");
  return [table(WARNING_MEANINGS), table(CAUTION_MEANINGS), table(PART_FAULT_MEANINGS), errorTable, table(READING_BUDGET_LINES)];
}

