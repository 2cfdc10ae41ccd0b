/**
 * A check that an SVG document is inert before it is placed in the page: every tag is an SVG
 * drawing element, no attribute is an event handler, a link or a style (the page's Content
 * Security Policy would block inline styles, and links or handlers have no place in a chart).
 * The charting library escapes the text it draws; this is the second line of defence, so a
 * change in the library cannot silently put active content into a report.
 */

const ALLOWED_ELEMENTS = new Set(['svg', 'g', 'path', 'line', 'rect', 'circle', 'ellipse', 'polyline', 'polygon', 'text', 'tspan', 'title', 'desc', 'defs', 'clipPath', 'linearGradient', 'radialGradient', 'stop']);
const FORBIDDEN_ATTRIBUTE = /^(on|href$|xlink:href$|style$|src$)/i;
// A whole tag at one position: name, then double-quoted attributes only (no "<" inside a value).
const TAG = /<(\/?)([A-Za-z][A-Za-z0-9:-]*)((?:\s+[A-Za-z_:][-A-Za-z0-9_:.]*="[^"<]*")*)\s*\/?>/y;
const ATTRIBUTE = /\s+([A-Za-z_:][-A-Za-z0-9_:.]*)="[^"<]*"/g;

export class UnsafeSvgError extends Error {
  override name = 'UnsafeSvgError';
}

/**
 * Throws unless `svg` consists only of allowed SVG elements with quoted, non-active attributes
 * and escaped text. An allow-list, so anything unexpected is refused rather than passed on.
 * @throws UnsafeSvgError naming the first offending tag or attribute
 * @example
 * assertInertSvg('<svg><text>&lt;b&gt;</text></svg>'); // passes
 * assertInertSvg('<svg><script>x</script></svg>'); // throws: element <script> is not allowed
 */
export function assertInertSvg(svg: string): void {
  if (!/^<svg[\s>]/.test(svg)) throw new UnsafeSvgError('the chart does not start with an <svg> element');
  let position = svg.indexOf('<');
  while (position !== -1) {
    TAG.lastIndex = position;
    const match = TAG.exec(svg);
    if (!match) throw new UnsafeSvgError(`unparseable markup at character ${position}: ${JSON.stringify(svg.slice(position, position + 40))}`);
    const element = match[2] as string;
    if (!ALLOWED_ELEMENTS.has(element)) throw new UnsafeSvgError(`element <${element}> is not allowed in a chart`);
    for (const attribute of (match[3] ?? '').matchAll(ATTRIBUTE)) {
      const name = attribute[1] as string;
      if (FORBIDDEN_ATTRIBUTE.test(name)) throw new UnsafeSvgError(`attribute ${name} on <${element}> is not allowed in a chart`);
    }
    position = svg.indexOf('<', position + match[0].length);
  }
}
