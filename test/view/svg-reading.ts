/**
 * Reads positions out of a chart's SVG for structural checks: the leaf elements of one named
 * mark group, the translate() of each, and the numeric tick labels of an axis. The charting
 * library writes each mark group as `<g class="mark-<type> role-mark <name>_marks">` holding
 * only leaf elements, which is what makes this simple reading enough.
 */

export interface LeafElement {
  tag: string;
  attributes: Record<string, string>;
  /** text content, entities left as written */
  text: string;
  /** from transform="translate(x,y)" */
  x: number;
  y: number;
}

function parseLeaves(markup: string): LeafElement[] {
  const leaves: LeafElement[] = [];
  const pattern = /<(line|path|text|rect)((?:\s+[\w:-]+="[^"]*")*)\s*(?:\/>|>([^<]*)<\/\1>)/g;
  for (const match of markup.matchAll(pattern)) {
    const attributes: Record<string, string> = {};
    for (const attribute of (match[2] ?? '').matchAll(/([\w:-]+)="([^"]*)"/g)) attributes[attribute[1] as string] = attribute[2] as string;
    const translate = /translate\(([-\d.e]+),([-\d.e]+)\)/.exec(attributes['transform'] ?? '');
    leaves.push({ tag: match[1] as string, attributes, text: match[3] ?? '', x: translate ? Number(translate[1]) : 0, y: translate ? Number(translate[2]) : 0 });
  }
  return leaves;
}

/** The leaf elements of the mark group named `name` (a layer's `name` in the spec). */
export function markGroup(svg: string, name: string): LeafElement[] {
  const start = svg.search(new RegExp(`<g class="mark-\\w+ role-mark ${name}_marks"`));
  if (start === -1) throw new Error(`no mark group named ${name}`);
  const end = svg.indexOf('</g>', start);
  return parseLeaves(svg.slice(start, end));
}

/** Every group of axis labels, each as its texts with positions. */
export function axisLabelGroups(svg: string): LeafElement[][] {
  const groups: LeafElement[][] = [];
  let position = svg.indexOf('<g class="mark-text role-axis-label"');
  while (position !== -1) {
    const end = svg.indexOf('</g>', position);
    groups.push(parseLeaves(svg.slice(position, end)));
    position = svg.indexOf('<g class="mark-text role-axis-label"', end);
  }
  return groups;
}

/** A tick label as a number (the library writes minus as U+2212), or NaN. */
export function labelValue(text: string): number {
  const cleaned = text.replace(/\u2212/g, '-').replace(/,/g, '').trim();
  return cleaned === '' ? Number.NaN : Number(cleaned);
}

/** x = a + b·value, read from the first horizontal axis whose labels are all numbers. */
export function horizontalScale(svg: string): (value: number) => number {
  const axis = axisLabelGroups(svg).find((labels) => labels.length >= 2 && labels.every((label) => Number.isFinite(labelValue(label.text))) && new Set(labels.map((label) => label.x)).size === labels.length);
  if (!axis) throw new Error('no numeric horizontal axis found');
  const first = axis[0] as LeafElement;
  const last = axis[axis.length - 1] as LeafElement;
  const slope = (last.x - first.x) / (labelValue(last.text) - labelValue(first.text));
  return (value: number) => first.x + (value - labelValue(first.text)) * slope;
}
