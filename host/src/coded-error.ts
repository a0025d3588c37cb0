// The library's errors carry a stable `code` (documented in docs/library.md) beside a message
// that says what to do next; callers branch on the code, people read the message.

export class CodedError<C extends string = string> extends Error {
  constructor(
    readonly code: C,
    message: string,
  ) {
    super(message);
    this.name = new.target.name;
  }
}
