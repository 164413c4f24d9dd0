import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import { parseNumericCsv } from '../../../src/core/table/parseNumericCsv.js';

const opts = { source: 'trace.csv' };

describe('parseNumericCsv(text, {source})', () => {
  it('reads a headed comma table with comments and CRLF line ends', () => {
    const t = parseNumericCsv('# polarizer run\r\nangle_deg,intensity\r\n0,1.5\r\n10,1.25e0\r\n\r\n20,-.5\r\n', opts);
    expect(t.header).toEqual(['angle_deg', 'intensity']);
    expect(t.rows).toEqual([[0, 1.5], [10, 1.25], [20, -0.5]]);
    expect(t.lineNumbers).toEqual([3, 4, 6]);
    expect(t.metadata).toEqual(['# polarizer run']);
    expect(t.delimiter).toBe(',');
  });

  it('keeps scope-export metadata lines aside and finds the header above the data', () => {
    const text = ['Model,XS-4104', 'Sample Interval,2.000000E-06', 'Source,CH1,CH2', 'Time(s),CH1(V),CH2(V)', '-1.0E-03,0.01,0.5', '-0.998E-03,0.02,0.52'].join('\n');
    const t = parseNumericCsv(text, opts);
    expect(t.header).toEqual(['Time(s)', 'CH1(V)', 'CH2(V)']);
    expect(t.rows[1]).toEqual([-0.000998, 0.02, 0.52]);
    expect(t.metadata).toEqual(['Model,XS-4104', 'Sample Interval,2.000000E-06', 'Source,CH1,CH2']);
  });

  it('reads semicolon tables with decimal commas, tab and whitespace tables, and quoted headers', () => {
    expect(parseNumericCsv('x;y\n1,5;2\n3;4,25\n', opts).rows).toEqual([[1.5, 2], [3, 4.25]]);
    expect(parseNumericCsv('1\t2\n3\t4\n', opts).rows).toEqual([[1, 2], [3, 4]]);
    expect(parseNumericCsv('  1   2\n 3 4  \n', opts).rows).toEqual([[1, 2], [3, 4]]);
    expect(parseNumericCsv('"wavelength, nm","counts"\n400,1\n401,2\n', opts).header).toEqual(['wavelength, nm', 'counts']);
  });

  it('names the file, line and column of text in a numeric cell', () => {
    let caught: unknown;
    try {
      parseNumericCsv('t,v\n0,1\n1,2\n2,abc\n', opts);
    } catch (err) {
      caught = err;
    }
    expect(caught).toBeInstanceOf(InputError);
    expect((caught as Error).message).toBe('trace.csv, line 4, column 2 (v): expected a number, got "abc"');
  });

  it('reports a bad row near the top instead of taking it for a header or metadata', () => {
    expect(() => parseNumericCsv('0,NaN\n10,1\n20,2\n', opts)).toThrow(/line 1, column 2: expected a number, got "NaN"/);
    expect(() => parseNumericCsv('0,1\n45,NaN\n90,2\n', opts)).toThrow(/line 2, column 2: expected a number, got "NaN"/);
    expect(() => parseNumericCsv('angle_deg,intensity\n0,1\n45,x\n90,2\n', opts)).toThrow(/line 3, column 2: expected a number, got "x"/);
  });

  it('rejects a short row, an empty file and a file with no numbers', () => {
    expect(() => parseNumericCsv('0,1\n1,2\n2\n', opts)).toThrow(/line 3: expected 2 columns/);
    expect(() => parseNumericCsv('\n# only a comment\n', opts)).toThrow(/no data rows/);
    expect(() => parseNumericCsv('hello\nworld\n', opts)).toThrow(/no numeric data found/);
    expect(() => parseNumericCsv('1\n2\n3\n', { source: 'x.csv', minColumns: 2 })).toThrow(/at least 2 columns/);
  });

  it('reads empty cells as NaN only when asked', () => {
    expect(() => parseNumericCsv('1,2\n3,\n4,5\n', opts)).toThrow(/line 2/);
    const t = parseNumericCsv('1,2\n3,\n4,5\n', { ...opts, allowEmpty: true });
    expect(t.rows).toEqual([[1, 2], [3, NaN], [4, 5]]);
  });
});
