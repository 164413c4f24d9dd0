import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import { batchOutput } from '../../src/tasks/batch/batchOutput.js';
import { describeError } from '../../src/tasks/batch/describeError.js';
import type { BatchRun } from '../../src/tasks/batch/runBatch.js';
import { batchSummaryCsv } from '../../src/tasks/batch/summary.js';

// How a batch words a file that failed: the item names the file, so its error says why without naming it again, and
// the failure is an error on stderr (the line the file would get alone), not a warning.
const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-batch-failures-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const errno = (code: string, file?: string): NodeJS.ErrnoException => Object.assign(new Error(`${code}: ${file ?? ''}`), { code, path: file });

describe('describeError(err, file)', () => {
  it('drops the file\'s own name from the front of the message, as given or resolved', () => {
    expect(describeError(new InputError('shots/a.jpg: the file is empty (0 bytes), not an image'), 'shots/a.jpg')).toEqual({ error: 'the file is empty (0 bytes), not an image', internal: false });
    expect(describeError(new InputError(`${path.resolve('shots/a.jpg')}: no spectrum found`), 'shots/a.jpg').error).toBe('no spectrum found');
    expect(describeError(errno('ENOENT', '/tmp/nope.jpg'), '/tmp/nope.jpg')).toEqual({ error: 'no such file', internal: false });
    expect(describeError(new InputError('runs/b.csv, line 3, column 2: expected a number, got "abc"'), 'runs/b.csv').error).toBe('line 3, column 2: expected a number, got "abc"');
  });

  it('keeps the name of another file the run reads, and the whole message without a file', () => {
    expect(describeError(errno('ENOENT', 'dark.jpg'), 'tube.jpg').error).toBe('dark.jpg: no such file');
    expect(describeError(new InputError('dark.jpg: no such file'), 'tube.jpg').error).toBe('dark.jpg: no such file');
    // Only a name followed by ": " is the file's: "tube.jpg.bak: …" is another file.
    expect(describeError(new InputError('tube.jpg.bak: no such file'), 'tube.jpg').error).toBe('tube.jpg.bak: no such file');
    expect(describeError(errno('ENOENT', '/tmp/nope.jpg')).error).toBe('/tmp/nope.jpg: no such file');
  });

  it('a folder given as an input, whose error Node leaves without a path, is the input; an unknown one is not', () => {
    expect(describeError(errno('EISDIR'), dir)).toEqual({ error: 'is a folder, not a file', internal: false });
    expect(describeError(errno('EISDIR'), path.join(dir, 'photo.jpg')).error).toBe('a file it reads is a folder, not a file');
  });

  it('anything else is an internal error with its stack', () => {
    const d = describeError(new TypeError('x is undefined'), 'a.jpg');
    expect(d.internal).toBe(true);
    expect(d.error).toMatch(/^internal error \(please report it with the input that caused it\): TypeError: x is undefined/);
  });
});

describe('batchOutput(command, batch, …) with a failed file', () => {
  const batch: BatchRun = {
    items: [
      { index: 0, file: 'shots/tube-a.jpg', status: 'ok', result: { json: { command: 'spectrum', peaks: [] }, text: 'shots/tube-a.jpg: 0 peaks\n', warnings: ['8 samples include clipped pixels'] } },
      { index: 1, file: '/tmp/nope.jpg', status: 'failed', error: 'no such file', internal: false },
    ],
    failed: 1,
    summaryFile: null,
    reportFile: null,
  };

  for (const json of [false, true]) {
    it(`names the file once in every line${json ? ' (--json)' : ''}, the failure as an error, not a warning`, () => {
      const out = batchOutput('spectrum', batch, { several: true, warnings: ['--elements: Xe has no lines'], done: 'measured', json });
      expect(out.notes.filter((n) => n.includes('nope.jpg'))).toEqual(['/tmp/nope.jpg: no such file']);
      expect(out.notes).toContain('1 of 2 files measured, 1 failed');
      if (!json) expect(out.notes).toEqual(expect.arrayContaining(['warning: tube-a.jpg: 8 samples include clipped pixels', 'warning: --elements: Xe has no lines']));
      else expect(out.notes.some((n) => n.startsWith('warning: '))).toBe(false);
      expect(out.text.split('\n').filter((l) => l.includes('nope.jpg'))).toEqual(['/tmp/nope.jpg: not measured: no such file']);
      const results = out.json.results as Array<Record<string, unknown>>;
      expect(results[1]).toEqual({ command: 'spectrum', file: '/tmp/nope.jpg', error: 'no such file' });
      expect(out.json.warnings).toEqual(['--elements: Xe has no lines', '/tmp/nope.jpg: no such file']);
    });
  }

  it('the summary CSV row names the file in its file column and says why in its error column', () => {
    const rows = batchSummaryCsv('spectrum', batch.items).split('\r\n');
    expect(rows[2].startsWith('/tmp/nope.jpg,failed,')).toBe(true);
    expect(rows[2].endsWith(',no such file')).toBe(true);
    expect(rows[2].match(/nope\.jpg/g)).toHaveLength(1);
  });
});
