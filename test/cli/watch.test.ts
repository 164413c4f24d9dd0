import { spawn } from 'node:child_process';
import { appendFileSync, copyFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, renameSync, rmSync, statSync, utimesSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import { readProcessed, watchFolder, WATCH_DEFAULTS } from '../../src/tasks/watch.js';
import { ROOT, runCli } from '../helpers/runCli.js';

const root = mkdtempSync(path.join(os.tmpdir(), 'glowprint-watch-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));
let n = 0;
const freshFolder = (): string => {
  const dir = path.join(root, `f${++n}`);
  mkdirSync(dir, { recursive: true });
  return dir;
};

/** A photo-like file with a given mtime in the past (seconds ago), as if it had been there a while. */
function photo(dir: string, name: string, content: string, agoS = 60): string {
  const file = path.join(dir, name);
  writeFileSync(file, content);
  const t = Date.now() / 1000 - agoS;
  utimesSync(file, t, t);
  return file;
}

/** A processing function that records what it was given: JSON with the file's size, like a command's result. */
function recorder(fail: (name: string) => string | null = () => null) {
  const calls: string[] = [];
  const process = async (file: string): Promise<Record<string, unknown>> => {
    const name = path.basename(file);
    calls.push(name);
    const why = fail(name);
    if (why) throw new InputError(`${file}: ${why}`, file);
    return { command: 'test', file, bytes: statSync(file).size, warnings: [] };
  };
  return { calls, process };
}

const logLines = (log: string): Array<Record<string, any>> =>
  readFileSync(log, 'utf8')
    .split('\n')
    .filter(Boolean)
    .map((l) => JSON.parse(l));

describe('watchFolder(options) — --once', () => {
  it('processes each photo there, oldest first, skipping non-photos, hidden, partial and its own files; one log line each', async () => {
    const dir = freshFolder();
    photo(dir, 'b.jpg', 'bbbb', 50);
    photo(dir, 'a.JPG', 'aa', 70);
    photo(dir, 'c.png', 'ccc', 40);
    photo(dir, 'notes.txt', 'x', 40);
    photo(dir, '.hidden.jpg', 'x', 40);
    photo(dir, 'd.jpg.part', 'x', 40);
    photo(dir, 'e.jpg~', 'x', 40);
    const r = recorder();
    const lines: string[] = [];
    const run = await watchFolder({ folder: dir, process: r.process, once: true, settleMs: 100, onLine: (l) => lines.push(l), summarise: (j, name) => `${name}: ${j.bytes} bytes` });
    expect(r.calls).toEqual(['a.JPG', 'b.jpg', 'c.png']);
    expect(lines).toEqual(['a.JPG: 2 bytes', 'b.jpg: 4 bytes', 'c.png: 3 bytes']);
    expect(run).toMatchObject({ processed: 3, failed: 0, skipped: 0, logFile: path.join(dir, WATCH_DEFAULTS.logName) });
    const log = logLines(run.logFile);
    expect(log.map((l) => l.watch.file)).toEqual(['a.JPG', 'b.jpg', 'c.png']);
    expect(log[1]).toMatchObject({ command: 'test', bytes: 4, watch: { file: 'b.jpg', size_bytes: 4, mtime_ms: Math.round(statSync(path.join(dir, 'b.jpg')).mtimeMs) } });
    expect(typeof log[1].watch.processed_at).toBe('string');
    expect(existsSync(run.logFile + '.lock')).toBe(false);
  });

  it('never processes a photo twice across restarts; a replaced photo (new size) counts as new', async () => {
    const dir = freshFolder();
    photo(dir, 'a.jpg', 'aa');
    photo(dir, 'b.jpg', 'bb');
    const first = recorder();
    await watchFolder({ folder: dir, process: first.process, once: true, settleMs: 50 });
    photo(dir, 'c.jpg', 'cc');
    photo(dir, 'b.jpg', 'bbbbbb', 30);
    const second = recorder();
    const run = await watchFolder({ folder: dir, process: second.process, once: true, settleMs: 50 });
    // Oldest first: c.jpg landed (mtime) 60 s ago, the new b.jpg 30 s ago.
    expect(second.calls).toEqual(['c.jpg', 'b.jpg']);
    expect(run).toMatchObject({ processed: 2, skipped: 1 });
    const third = recorder();
    expect((await watchFolder({ folder: dir, process: third.process, once: true, settleMs: 50 })).skipped).toBe(3);
    expect(third.calls).toEqual([]);
    expect(logLines(path.join(dir, WATCH_DEFAULTS.logName)).map((l) => `${l.watch.file}:${l.watch.size_bytes}`)).toEqual(['a.jpg:2', 'b.jpg:2', 'c.jpg:2', 'b.jpg:6']);
  });

  it('logs a photo that fails with its error, goes on with the rest, and does not retry it until it changes', async () => {
    const dir = freshFolder();
    photo(dir, 'bad.jpg', 'x', 80);
    photo(dir, 'good.jpg', 'yy', 70);
    const r = recorder((name) => (name === 'bad.jpg' ? 'no spectrum found' : null));
    const lines: string[] = [];
    const run = await watchFolder({ folder: dir, process: r.process, once: true, settleMs: 50, onLine: (l) => lines.push(l) });
    expect(run).toMatchObject({ processed: 1, failed: 1 });
    expect(lines[0]).toBe(`bad.jpg: failed — ${path.join(dir, 'bad.jpg')}: no spectrum found`);
    const log = logLines(run.logFile);
    expect(log[0]).toMatchObject({ file: 'bad.jpg', error: `${path.join(dir, 'bad.jpg')}: no spectrum found`, watch: { file: 'bad.jpg' } });
    const again = recorder();
    await watchFolder({ folder: dir, process: again.process, once: true, settleMs: 50 });
    expect(again.calls).toEqual([]);
    photo(dir, 'bad.jpg', 'fixed', 20);
    await watchFolder({ folder: dir, process: again.process, once: true, settleMs: 50 });
    expect(again.calls).toEqual(['bad.jpg']);
  });

  it('leaves the photos exactly as they were', async () => {
    const dir = freshFolder();
    const f = photo(dir, 'a.jpg', 'original bytes');
    const before = statSync(f);
    await watchFolder({ folder: dir, process: recorder().process, once: true, settleMs: 50 });
    expect(readFileSync(f, 'utf8')).toBe('original bytes');
    expect(statSync(f).mtimeMs).toBe(before.mtimeMs);
    expect(statSync(f).size).toBe(before.size);
  });

  it('keeps whole lines after a torn write: the damaged last line is left alone and the next starts on its own line', async () => {
    const dir = freshFolder();
    const log = path.join(dir, 'results.jsonl');
    photo(dir, 'a.jpg', 'aa');
    await watchFolder({ folder: dir, logFile: log, process: recorder().process, once: true, settleMs: 50 });
    appendFileSync(log, '{"command": "test", "watch": {"file": "b.j');
    const torn = readFileSync(log, 'utf8');
    photo(dir, 'b.jpg', 'bb');
    const notes: string[] = [];
    await watchFolder({ folder: dir, logFile: log, process: recorder().process, once: true, settleMs: 50, onNote: (m) => notes.push(m) });
    const text = readFileSync(log, 'utf8');
    expect(text.startsWith(torn + '\n')).toBe(true);
    const lines = text.split('\n').filter(Boolean);
    expect(lines).toHaveLength(3);
    expect(JSON.parse(lines[2]).watch.file).toBe('b.jpg');
    expect(notes.some((m) => /line 2 is incomplete/.test(m))).toBe(true);
    expect((await readProcessed(log)).size).toBe(2);
  });
});

describe('watchFolder(options) — watching', () => {
  it('waits until a photo being written has stopped changing, takes it once, and stops cleanly on abort', async () => {
    const dir = freshFolder();
    const controller = new AbortController();
    const sizes: number[] = [];
    const done = watchFolder({
      folder: dir,
      settleMs: 500,
      pollMs: 40,
      signal: controller.signal,
      process: async (file) => {
        sizes.push(statSync(file).size);
        return { bytes: statSync(file).size, warnings: [] };
      },
    });
    // A camera writing a 6 kB photo in six pieces, 40 ms apart: never still for the 500 ms settling time.
    const file = path.join(dir, 'IMG_0001.jpg');
    for (let i = 0; i < 6; i++) {
      appendFileSync(file, 'x'.repeat(1000));
      await new Promise((r) => setTimeout(r, 40));
    }
    const deadline = Date.now() + 10_000;
    while (sizes.length === 0 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
    await new Promise((r) => setTimeout(r, 700));
    controller.abort();
    const run = await done;
    expect(sizes).toEqual([6000]);
    expect(run.processed).toBe(1);
    expect(existsSync(path.join(dir, WATCH_DEFAULTS.logName + '.lock'))).toBe(false);
  });

  it('refuses a log another live watcher holds, and takes over a stale lock', async () => {
    const dir = freshFolder();
    const log = path.join(dir, WATCH_DEFAULTS.logName);
    writeFileSync(log + '.lock', `${process.ppid}\n`);
    await expect(watchFolder({ folder: dir, process: recorder().process, once: true })).rejects.toThrow(
      new RegExp(`another glowprint watch \\(process ${process.ppid}\\) is writing this log`),
    );
    writeFileSync(log + '.lock', '2147483646\n');
    photo(dir, 'a.jpg', 'aa');
    expect((await watchFolder({ folder: dir, process: recorder().process, once: true, settleMs: 50 })).processed).toBe(1);
  });

  it('bad input: a folder that does not exist', async () => {
    await expect(watchFolder({ folder: path.join(root, 'nope'), process: recorder().process, once: true })).rejects.toThrow(/nope: not a folder/);
  });
});

describe('glowprint watch', () => {
  const DEMO = path.join(ROOT, 'data/demo');
  const schema = new Ajv2020({ allErrors: true }).compile(JSON.parse(readFileSync(path.join(ROOT, 'data/schema/results/identify.schema.json'), 'utf8')));

  it('--help names the options, the once-only rule and the cautions', () => {
    const r = runCli(['watch', '--help']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/--calibration <profile>/);
    expect(r.stdout).toMatch(/--once/);
    expect(r.stdout).toMatch(/processed once/);
    expect(r.stdout).toMatch(/kilovolts/);
  });

  it('--once identifies each photo with the profile, logs schema-valid results, reports a broken photo, and skips them all next time', () => {
    const dir = freshFolder();
    const profile = path.join(root, 'rig.json');
    const cal = runCli(['calibrate', path.join(DEMO, 'cfl-calibration.jpg'), '--lamp', 'fluorescent', '--out', profile]);
    expect(cal.status, cal.stderr).toBe(0);
    copyFileSync(path.join(DEMO, 'tube-a.jpg'), path.join(dir, 'tube-a.jpg'));
    copyFileSync(path.join(DEMO, 'tube-e.jpg'), path.join(dir, 'tube-e.jpg'));
    photo(dir, 'broken.jpg', 'not a photo at all', 5);
    const r = runCli(['watch', dir, '--once', '--calibration', profile, '--settle', '0.2']);
    expect(r.status, r.stderr).toBe(0);
    const out = r.stdout.trim().split('\n');
    expect(out).toHaveLength(3);
    expect(out.some((l) => /broken\.jpg: failed — /.test(l))).toBe(true);
    expect(out.some((l) => /tube-a\.jpg: Ne — /.test(l))).toBe(true);
    expect(out.some((l) => /tube-e\.jpg: Ne \+ Hg — /.test(l))).toBe(true);
    const log = logLines(path.join(dir, WATCH_DEFAULTS.logName));
    const results = log.filter((l) => !l.error);
    expect(results).toHaveLength(2);
    for (const l of results) {
      expect(schema(l), JSON.stringify(schema.errors)).toBe(true);
      expect(l).toMatchObject({ command: 'identify', calibration: { from: 'profile' } });
    }
    const again = runCli(['watch', dir, '--once', '--calibration', profile, '--settle', '0.2']);
    expect(again.status).toBe(0);
    expect(again.stdout).toBe('');
    expect(again.stderr).toMatch(/0 photo\(s\) processed, 0 failed, 3 already in/);
    const report = runCli(['report', path.join(dir, WATCH_DEFAULTS.logName), '--out', path.join(dir, 'report')]);
    expect(report.status, report.stderr).toBe(0);
    expect(report.stdout).toMatch(/\(3 results;/);
  });

  it('keeps watching until Ctrl-C, then finishes the photo in hand, removes its lock and exits 0', async () => {
    const dir = freshFolder();
    const child = spawn(process.execPath, [path.join(ROOT, 'dist/src/cli/main.js'), 'watch', dir, '--settle', '0.3', '--poll', '0.2'], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
    // Wait for the watch to start (its first note), then drop a photo in the way a sync client does: rename into place.
    const until = async (test: () => boolean, ms: number): Promise<void> => {
      const end = Date.now() + ms;
      while (!test() && Date.now() < end) await new Promise((r) => setTimeout(r, 50));
    };
    await until(() => /watching/.test(stderr), 20_000);
    copyFileSync(path.join(DEMO, 'tube-e.jpg'), path.join(dir, 'incoming.part'));
    renameSync(path.join(dir, 'incoming.part'), path.join(dir, 'tube-e.jpg'));
    await until(() => /tube-e\.jpg:/.test(stdout), 60_000);
    child.kill('SIGINT');
    expect(await exited).toBe(0);
    expect(stdout).toMatch(/tube-e\.jpg: Ne/);
    expect(stderr).toMatch(/1 photo\(s\) processed/);
    expect(existsSync(path.join(dir, WATCH_DEFAULTS.logName + '.lock'))).toBe(false);
    expect(logLines(path.join(dir, WATCH_DEFAULTS.logName))).toHaveLength(1);
  });

  it('bad input: a folder that is not there, one line, exit 1', () => {
    const r = runCli(['watch', path.join(root, 'missing'), '--once']);
    expect(r.status).toBe(1);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/missing: not a folder/);
  });
});
