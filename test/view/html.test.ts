import { describe, expect, test } from 'vitest';
import { escapeHtml, html, joinHtml, trusted } from '../../src/view/html.js';

describe('escaping of text placed in the page', () => {
  test('the five HTML-special characters are replaced by entities', () => {
    expect(escapeHtml(`&<>"'`)).toBe('&amp;&lt;&gt;&quot;&#39;');
  });

  test('a tag breaking out of an attribute becomes inert text', () => {
    expect(escapeHtml('"><img src=x onerror=alert(1)>')).toBe('&quot;&gt;&lt;img src=x onerror=alert(1)&gt;');
  });

  test('text without special characters is left as it is', () => {
    expect(escapeHtml('region=North & more')).toBe('region=North &amp; more');
    expect(escapeHtml('plain text 12.5%')).toBe('plain text 12.5%');
  });
});

describe('the html template', () => {
  test('escapes interpolated text in element content and in quoted attributes', () => {
    const name = '<script>alert("x")</script>';
    expect(html`<td title="${name}">${name}</td>`.markup).toBe(
      '<td title="&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;">&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;</td>',
    );
  });

  test('keeps markup built by the template and joins lists without separators', () => {
    const items = ['a<b', 'c'].map((item) => html`<li>${item}</li>`);
    expect(html`<ul>${items}</ul>`.markup).toBe('<ul><li>a&lt;b</li><li>c</li></ul>');
  });

  test('writes numbers and drops null, undefined and false', () => {
    expect(html`${3}|${null}|${undefined}|${false}|${0}`.markup).toBe('3||||0');
  });

  test('inserts trusted markup as it is and joins pieces with a separator', () => {
    expect(html`${trusted('<br>')}`.markup).toBe('<br>');
    expect(joinHtml([html`<i>1</i>`, html`<i>2</i>`], ', ').markup).toBe('<i>1</i>, <i>2</i>');
  });
});
