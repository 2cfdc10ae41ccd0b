/**
 * HTML built from templates that escape every interpolated value unless it is already
 * `SafeHtml`. Segment names, dimension values and report names are user data; building the
 * page only through `html` means a value cannot reach the page unescaped by forgetting a call.
 */

/** Markup that is already safe to place in a page: escaped text, or markup built by `html`. */
export class SafeHtml {
  constructor(readonly markup: string) {}
  toString(): string {
    return this.markup;
  }
}

/** What a template may interpolate: text is escaped, `SafeHtml` is kept, lists are joined, nothing is dropped. */
export type HtmlValue = SafeHtml | string | number | null | undefined | false | readonly HtmlValue[];

const ESCAPES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

/**
 * Escapes text for HTML element content and for quoted attribute values (OWASP XSS
 * prevention cheat sheet, rules 1 and 2: the five characters & < > " ').
 * @example
 * escapeHtml('"><img onerror=x>'); // '&quot;&gt;&lt;img onerror=x&gt;'
 */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (character) => ESCAPES[character] as string);
}

function render(value: HtmlValue): string {
  if (value instanceof SafeHtml) return value.markup;
  if (value === null || value === undefined || value === false) return '';
  if (Array.isArray(value)) return value.map((item: HtmlValue) => render(item)).join('');
  return escapeHtml(String(value));
}

/**
 * Tagged template for HTML: interpolations are escaped (so quoted attributes and element text
 * are both safe); `SafeHtml` values and lists of them are inserted as they are.
 * Attribute values in templates must be double-quoted for the escaping to protect them.
 * @example
 * html`<td title="${name}">${name}</td>`.markup; // with name '<b>' → '<td title="&lt;b&gt;">&lt;b&gt;</td>'
 */
export function html(strings: TemplateStringsArray, ...values: HtmlValue[]): SafeHtml {
  let markup = strings[0] ?? '';
  values.forEach((value, index) => {
    markup += render(value) + (strings[index + 1] ?? '');
  });
  return new SafeHtml(markup);
}

/**
 * Marks trusted markup (the page's own CSS and script, or SVG that passed `assertInertSvg`) as
 * safe. Never call it on anything that contains user data not escaped by its producer.
 * @example
 * trusted('<br>').markup; // '<br>'
 */
export function trusted(markup: string): SafeHtml {
  return new SafeHtml(markup);
}

/**
 * Joins pieces with a separator, as `SafeHtml`.
 * @example
 * joinHtml([html`<li>a</li>`, html`<li>b</li>`], '\n');
 */
export function joinHtml(pieces: readonly SafeHtml[], separator = ''): SafeHtml {
  return new SafeHtml(pieces.map((piece) => piece.markup).join(separator));
}
