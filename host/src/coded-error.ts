// The library's errors carry a stable `code` (listed in codes.ts, documented in docs/codes.md)
// beside a message that says what to do next; callers branch on the code, people read the message.

import type { ErrorCode } from "./codes.ts";

export class CodedError<C extends ErrorCode = ErrorCode> extends Error {
  constructor(
    readonly code: C,
    message: string,
  ) {
    super(message);
    this.name = new.target.name;
  }
}
