// CSV as RFC 4180 writes it, for every CSV the CLI and the logs produce.

/** One field: quoted when it holds a comma, quote or line break; null and undefined are empty. */
export function csvField(v: unknown): string {
  const s = v === null || v === undefined ? "" : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}
