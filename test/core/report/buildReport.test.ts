import { describe, expect, it } from 'vitest';
import { buildReport } from '../../../src/core/report/buildReport.js';
import { formatWithUncertainty } from '../../../src/core/report/html.js';

describe('formatWithUncertainty(value, uncertainty, unit)', () => {
  it('rounds the uncertainty to two significant digits and the value to match', () => {
    expect(formatWithUncertainty(598.7654, 0.01234, 'lines/mm')).toBe('598.765 ± 0.012 lines/mm');
    expect(formatWithUncertainty(0.9123, 0.0456)).toBe('0.912 ± 0.046');
    expect(formatWithUncertainty(249.6e6, 1.3e6)).toBe('249600000 ± 1300000');
    expect(formatWithUncertainty(12.5, undefined, 'nm')).toBe('12.5 nm');
  });
});

describe('buildReport(options)', () => {
  it('escapes user text, inlines SVG without the XML prolog, and shows the cautions', () => {
    const html = buildReport({
      title: 'Audit <1>',
      sections: [{ id: 's1', heading: 'tube "A"', svgs: ['<?xml version="1.0"?>\n<svg xmlns="http://www.w3.org/2000/svg"></svg>'], warnings: ['frame 3 saturated'] }],
      generatedAt: new Date('2026-12-01T00:00:00Z'),
    });
    expect(html).toContain('<title>Audit &lt;1&gt;</title>');
    expect(html).toContain('tube &quot;A&quot;');
    expect(html).toContain('<figure><svg xmlns');
    expect(html).not.toContain('<?xml');
    expect(html).toMatch(/IEC 60825-1/);
    expect(html).not.toMatch(/<script/);
  });
});
