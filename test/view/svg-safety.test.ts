import { describe, expect, test } from 'vitest';
import { assertInertSvg, UnsafeSvgError } from '../../src/view/svg-safety.js';
import { renderChart } from '../../src/view/render-chart.js';

const drawing = (inner: string) => `<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10">${inner}</svg>`;

describe('the check that a chart is inert', () => {
  test('accepts drawing elements with escaped text, even text that reads like a handler', () => {
    expect(() => assertInertSvg(drawing('<g transform="translate(1,2)"><path d="M0,0h5"/><text fill="#000">&lt;img onerror=alert(1)&gt; " onclick=</text></g>'))).not.toThrow();
  });

  test('accepts what the charting library draws for a small chart', async () => {
    const svg = await renderChart({ data: { values: [{ a: 1, b: '<b>' }] }, mark: 'point', encoding: { x: { field: 'a', type: 'quantitative' }, y: { field: 'b', type: 'nominal' } } });
    expect(() => assertInertSvg(svg)).not.toThrow();
  });

  test('refuses a script element', () => {
    expect(() => assertInertSvg(drawing('<script>alert(1)</script>'))).toThrow(/element <script> is not allowed/);
  });

  test('refuses a foreignObject, which could carry HTML', () => {
    expect(() => assertInertSvg(drawing('<foreignObject><div/></foreignObject>'))).toThrow(UnsafeSvgError);
  });

  test('refuses an event handler attribute', () => {
    expect(() => assertInertSvg(drawing('<rect onload="alert(1)"/>'))).toThrow(/attribute onload/);
  });

  test('refuses links and inline styles', () => {
    expect(() => assertInertSvg(drawing('<path xlink:href="javascript:alert(1)"/>'))).toThrow(/xlink:href/);
    expect(() => assertInertSvg(drawing('<path href="#x"/>'))).toThrow(/attribute href/);
    expect(() => assertInertSvg(drawing('<path style="fill:red"/>'))).toThrow(/attribute style/);
  });

  test('refuses unquoted attributes and a stray "<" that could open a tag', () => {
    expect(() => assertInertSvg(drawing('<path d=M0/>'))).toThrow(/unparseable markup/);
    expect(() => assertInertSvg(drawing('<text><img src=x></text>'))).toThrow(/unparseable markup/);
    expect(() => assertInertSvg(drawing('<text><img src="x"></text>'))).toThrow(/element <img>/);
    expect(() => assertInertSvg(drawing('<text>a < b</text>'))).toThrow(/unparseable markup/);
  });

  test('refuses anything that is not an svg document', () => {
    expect(() => assertInertSvg('<div></div>')).toThrow(/does not start with an <svg> element/);
  });
});
