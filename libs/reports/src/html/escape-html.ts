/** Text for HTML element content and quoted attribute values: every character that could open markup is escaped. */
export function escapeHtml(text: string): string {
  return text.replace(
    /[&<>"']/g,
    (ch) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[ch]!,
  );
}

/** What {@link html} interpolates: text and numbers (escaped), markup, lists of them; null, undefined and false give nothing. */
export type HtmlValue = Html | string | number | boolean | null | undefined | readonly HtmlValue[];

/** Tagged template that escapes every interpolated value unless it is already {@link Html}. */
export function html(strings: TemplateStringsArray, ...values: HtmlValue[]): Html {
  let out = strings[0];
  values.forEach((v, i) => {
    out += toHtml(v) + strings[i + 1];
  });
  return new Html(out);
}

/** Markup from the code itself (never from users), taken as it is. */
export function trusted(markup: string): Html {
  return new Html(markup);
}

/** Markup built by {@link html}: interpolating it again does not escape it twice. */
export class Html {
  constructor(readonly text: string) {}
  toString(): string {
    return this.text;
  }
}

function toHtml(v: HtmlValue): string {
  if (v instanceof Html) return v.text;
  if (Array.isArray(v)) return (v as readonly HtmlValue[]).map(toHtml).join('');
  if (v === null || v === undefined || v === false) return '';
  return escapeHtml(String(v));
}
