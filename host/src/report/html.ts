// One auto-escaping template for every piece of the report page. `html\`…\`` escapes each
// interpolated value for HTML text and attribute values (& < > " '); only values that are
// themselves the result of `html\`…\`` pass through unchanged, so a field from a capture file can
// never be inserted as markup. Arrays are rendered item by item under the same rule. The one way
// round it is `projectConstant`, for fixed text written in this project (the style sheet).

const MARKUP = Symbol("henrytick.markup");

/** Markup built by the `html` tag (or a project constant): already safe to insert. */
export interface Markup {
  readonly [MARKUP]: true;
  readonly text: string;
  toString(): string;
}

export type Interpolation = Markup | string | number | boolean | null | undefined | readonly Interpolation[];

function markup(text: string): Markup {
  return { [MARKUP]: true, text, toString: () => text };
}

export function isMarkup(v: unknown): v is Markup {
  return typeof v === "object" && v !== null && (v as Record<symbol, unknown>)[MARKUP] === true;
}

/** Text for an HTML/XML text node or a quoted attribute value. */
export function escapeHtml(s: string): string {
  return s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;").replace(/'/g, "&#39;");
}

function render(v: Interpolation): string {
  if (isMarkup(v)) return v.text;
  if (Array.isArray(v)) return v.map(render).join("");
  if (v === null || v === undefined || v === false) return "";
  if (typeof v === "number") return String(v);
  if (typeof v === "string" || v === true) return escapeHtml(String(v));
  throw new TypeError(`html template: cannot insert a ${typeof v}`);
}

/** Tagged template: every interpolation escaped unless it is Markup. */
export function html(strings: TemplateStringsArray, ...values: Interpolation[]): Markup {
  let out = strings[0];
  for (let i = 0; i < values.length; i++) out += render(values[i]) + strings[i + 1];
  return markup(out);
}

/** Markup joined with a separator (itself escaped unless Markup). */
export function joinMarkup(items: readonly Interpolation[], sep: Interpolation = ""): Markup {
  const s = render(sep);
  return markup(items.map(render).join(s));
}

/**
 * Fixed text written in this project's source (never data): passed through as it stands. It must
 * not be able to close the element it sits in.
 */
export function projectConstant(text: string, closes: string): Markup {
  if (text.toLowerCase().includes(`</${closes}`)) throw new Error(`project constant would close <${closes}>`);
  return markup(text);
}
