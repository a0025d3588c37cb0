// Ctrl-C for the commands where it is a normal finish (measure --watch, sort, wind): the first
// finishes (the summary or the readings so far still print, status 0), a second one pressed
// later quits at once with status 130.
//
// One Ctrl-C can arrive twice: a terminal sends SIGINT to the whole foreground process group,
// and `npx henrytick` (npm) also forwards the SIGINT it got to its child. A SIGINT within
// SAME_PRESS_MS of the first is therefore taken as the same press, so `npx henrytick` and
// `node host/bin/henrytick.js` finish alike (under npm the process stays up to SAME_PRESS_MS to
// take the repeat). The shell npm runs the command through matters too: .npmrc names bash,
// since dash dies of the terminal's SIGINT itself and npm then reports 130.

/** A SIGINT this soon after the first is the same Ctrl-C delivered again (npm forwarding it). */
export const SAME_PRESS_MS = 1000;

export interface CtrlC {
  /** Stops listening; a repeat of the first press still due is absorbed rather than killing the process. */
  dispose(): void;
  /** process.exit(code), once a repeat of the first press still due under npm has come and gone. */
  exit(code: number): void;
}

const underNpm = () => process.env.npm_lifecycle_event !== undefined;

/** Calls `finish` on the first Ctrl-C; a later, separate press exits with status 130. */
export function onCtrlC(finish: () => void): CtrlC {
  let firstAt: number | null = null;
  const handler = () => {
    const now = Date.now();
    if (firstAt === null) {
      firstAt = now;
      finish();
    } else if (now - firstAt > SAME_PRESS_MS) process.exit(130);
  };
  process.on("SIGINT", handler);
  return {
    dispose() {
      const left = firstAt === null ? 0 : SAME_PRESS_MS - (Date.now() - firstAt);
      if (left > 0) {
        // The repeat of the press that finished the command may still be on its way. The absorber
        // goes on before the handler comes off: with no listener at all, SIGINT's default (die)
        // would be back for that instant.
        // Under npm (npx, npm run) the repeat is sure to come, and it must not land while the
        // process is shutting down (the default action is back then): the process waits for it.
        const absorb = () => undefined;
        process.on("SIGINT", absorb);
        const t = setTimeout(() => process.off("SIGINT", absorb), left);
        if (!underNpm()) t.unref();
      }
      process.off("SIGINT", handler);
    },
    exit(code: number) {
      const left = firstAt === null || !underNpm() ? 0 : SAME_PRESS_MS - (Date.now() - firstAt);
      if (left > 0) setTimeout(() => process.exit(code), left);
      else process.exit(code);
    },
  };
}
