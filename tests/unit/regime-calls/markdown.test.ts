import { describe, expect, it } from 'vitest';
import { CAUTIONS } from '@shared/cautions.ts';
import { escapeHtml, renderCallMail, renderMarkdown, type CallMailContent } from '../../../server/mail/templates.ts';

describe('strict markdown of the narrative', () => {
  it('renders paragraphs, emphasis, lists and safe links', () => {
    const html = renderMarkdown('First line\nsecond line\n\n**Wet** and *mild*, _windy_.\n\n- one\n- two\n\n1. a\n2. b\n\nSee [the desk](https://nordvale.example/desk?a=1&b=2).');
    expect(html).toBe(
      [
        '<p>First line<br>second line</p>',
        '<p><strong>Wet</strong> and <em>mild</em>, <em>windy</em>.</p>',
        '<ul><li>one</li><li>two</li></ul>',
        '<ol><li>a</li><li>b</li></ol>',
        '<p>See <a href="https://nordvale.example/desk?a=1&amp;b=2" rel="noopener noreferrer">the desk</a>.</p>',
      ].join('\n'),
    );
  });

  it.each([
    ['<script>alert(1)</script>', '&lt;script&gt;alert(1)&lt;/script&gt;'],
    ['<img src=x onerror=alert(1)>', '&lt;img src=x onerror=alert(1)&gt;'],
    ['[click](javascript:alert(1))', '[click](javascript:alert(1))'],
    ['[click](data:text/html,<b>x</b>)', '[click](data:text/html,&lt;b&gt;x&lt;/b&gt;)'],
    ['[x](https://a.example/"onmouseover="alert(1))', '[x](https://a.example/&quot;onmouseover=&quot;alert(1))'],
    ['**<b onclick="x">bold</b>**', '<strong>&lt;b onclick=&quot;x&quot;&gt;bold&lt;/b&gt;</strong>'],
    ['[<img src=x>](https://a.example)', '<a href="https://a.example" rel="noopener noreferrer">&lt;img src=x&gt;</a>'],
  ])('neutralises %s', (input, inner) => {
    const html = renderMarkdown(input);
    expect(html).toBe(`<p>${inner}</p>`);
    expect(html).not.toMatch(/<(script|img|b )|href="(javascript|data)|\son\w+="/i);
  });

  it('escapes the five HTML metacharacters', () => {
    expect(escapeHtml(`<a href="x">'&'</a>`)).toBe('&lt;a href=&quot;x&quot;&gt;&#39;&amp;&#39;&lt;/a&gt;');
  });
});

describe('the regime-call e-mail', () => {
  const content: CallMailContent = {
    version: 2,
    validFrom: '2026-12-03',
    validTo: '2026-12-05',
    confidence: 'high',
    regimes: [
      { from: '2026-12-03', to: '2026-12-03', name: 'Westerly flow' },
      { from: '2026-12-04', to: '2026-12-05', name: 'Blocking <high>' },
    ],
    weights: [
      { label: 'Cluster 1 (members 0, 2)', pct: 62.5 },
      { label: 'Cluster 2 (members 1)', pct: 37.5 },
    ],
    weightBasis: 'cluster',
    keyRisks: 'Front **faster** than the control.',
    narrative: 'Wet start, then settled.',
    correctionReason: 'Block a day earlier.',
    author: 'Dana Met',
    summary: [{ region: 'North fjords', days: 3, precipMm: 41.26, inflowGwh: 12.345, solarGwh: null }],
    publicUrl: 'https://liftwise.nordvale.example',
  };

  it('names period, regimes, confidence and correction in the subject; bodies carry weights, summary and cautions', () => {
    const mail = renderCallMail(content);
    expect(mail.subject).toBe('Regime call 2026-12-03 to 2026-12-05: Westerly flow / Blocking <high>, confidence high (correction, version 2)');
    expect(mail.text).toContain('  Cluster 1 (members 0, 2): 62.5 %');
    expect(mail.text).toContain('North fjords (3 d): precipitation 41.3 mm, inflow 12.35 GWh, solar –');
    expect(mail.text).toContain('Correction of the earlier version: Block a day earlier.');
    expect(mail.html).toContain('Blocking &lt;high&gt;');
    expect(mail.html).not.toContain('Blocking <high>');
    expect(mail.html).toContain('<strong>faster</strong>');
    for (const c of CAUTIONS) {
      expect(mail.text).toContain(c);
      expect(mail.html).toContain(escapeHtml(c));
    }
  });
});
