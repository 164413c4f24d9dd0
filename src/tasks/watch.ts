/**
 * The `watch` task: a folder that photos land in (a tethered camera's, a phone's sync folder) → each new photo
 * processed once it is complete, one JSON line per photo appended to a log, one summary line printed.
 *
 * - Complete: a photo is taken when its size and modification time have not changed for `settleMs`, or at once
 *   when its modification time is already older than that (a file renamed into place, or there before the watch).
 * - Once only: the log is the state. Every line records the photo's name, size and modification time; on start the
 *   log is read back and those photos are skipped. A photo replaced under the same name (new size or time) is a new
 *   photo. A photo that fails is logged with its error and not retried until it changes.
 * - Nothing lost or altered: photos are only read; the log is only appended to, a whole line per write, synced; a
 *   torn last line (power cut mid-write) is left as it is and the next line starts on a fresh line. A lock file beside
 *   the log keeps a second watcher off the same log.
 * - New files are noticed through fs.watch, with a full rescan every `pollMs` as the fallback for folders fs.watch
 *   cannot follow (network shares, some sync clients).
 */
import { watch as fsWatch, type FSWatcher } from 'node:fs';
import { open, readFile, readdir, stat, unlink, writeFile, type FileHandle } from 'node:fs/promises';
import path from 'node:path';
import { InputError } from '../core/errors.js';

export interface WatchOptions {
  folder: string;
  /** The results log (JSON Lines). @default <folder>/glowprint-watch.jsonl */
  logFile?: string;
  /** Measures one photo: the JSON object of the result (what the command's --json prints). Throws for bad input. */
  process: (file: string) => Promise<Record<string, unknown>>;
  /** One line for a person per photo (the CLI prints it). Default: "<name>: done". */
  summarise?: (json: Record<string, unknown>, name: string) => string;
  /** Called with each summary line. */
  onLine?: (line: string) => void;
  /** Called with problems that do not stop the watch (a damaged log line, fs.watch unavailable). */
  onNote?: (message: string) => void;
  /** Process what is there (waiting for files still being written) and return. @default false */
  once?: boolean;
  /** @default 1000 */
  settleMs?: number;
  /** @default 2000 */
  pollMs?: number;
  /** File name endings that are photos (lower case). @default WATCH_DEFAULTS.extensions */
  extensions?: readonly string[];
  /** Stops the watch: the photo being processed is finished and logged first. */
  signal?: AbortSignal;
  /** @default () => new Date() */
  now?: () => Date;
}

export const WATCH_DEFAULTS = {
  logName: 'glowprint-watch.jsonl',
  settleMs: 1000,
  pollMs: 2000,
  extensions: ['.jpg', '.jpeg', '.png', '.tif', '.tiff', '.webp'],
} as const;

export interface WatchRun {
  logFile: string;
  processed: number;
  failed: number;
  /** Photos skipped because the log already had them. */
  skipped: number;
}

/** What the log records of a photo to know it again. */
export interface WatchRecord {
  file: string;
  sizeBytes: number;
  mtimeMs: number;
  processedAt: string;
}

/** Names that sync clients and cameras use while a file is still arriving. */
const PARTIAL = /(\.(part|partial|tmp|temp|crdownload|download|!sync|sb-[0-9a-f]+)|~)$/i;

export async function watchFolder(options: WatchOptions): Promise<WatchRun> {
  const folder = options.folder;
  const settleMs = options.settleMs ?? WATCH_DEFAULTS.settleMs;
  const pollMs = options.pollMs ?? WATCH_DEFAULTS.pollMs;
  const extensions = options.extensions ?? WATCH_DEFAULTS.extensions;
  const now = options.now ?? (() => new Date());
  const note = options.onNote ?? (() => {});
  const logFile = options.logFile ?? path.join(folder, WATCH_DEFAULTS.logName);
  const folderStat = await stat(folder).catch(() => null);
  if (!folderStat?.isDirectory()) throw new InputError(`${folder}: not a folder (give the folder the photos land in)`, folder);

  const done = await readProcessed(logFile, note);
  const lock = await takeLock(logFile);
  const log = await openLog(logFile);
  const run: WatchRun = { logFile, processed: 0, failed: 0, skipped: 0 };
  const ownFiles = new Set([path.resolve(logFile), path.resolve(lock)]);
  const counted = new Set<string>();
  /** Last size and time seen of each photo not yet taken, and when. */
  const pending = new Map<string, { sizeBytes: number; mtimeMs: number; seenMs: number }>();

  let wake: (() => void) | null = null;
  const wakeUp = (): void => {
    wake?.();
    wake = null;
  };
  let watcher: FSWatcher | null = null;
  if (!options.once) {
    try {
      watcher = fsWatch(folder, { persistent: true }, wakeUp);
      watcher.on('error', (err) => {
        note(`watching ${folder} for changes failed (${(err as Error).message}); rescanning every ${pollMs / 1000} s instead`);
        watcher?.close();
        watcher = null;
      });
    } catch (err) {
      note(`cannot watch ${folder} for changes (${(err as Error).message}); rescanning every ${pollMs / 1000} s instead`);
    }
  }
  options.signal?.addEventListener('abort', wakeUp);

  try {
    while (!options.signal?.aborted) {
      const ready = await scan();
      for (const photo of ready) {
        if (options.signal?.aborted) break;
        await take(photo);
      }
      if (options.once && pending.size === 0 && ready.length === 0) break;
      if (options.signal?.aborted) break;
      // Files still settling are looked at again after the settling time; otherwise wait for a change or the poll.
      const delay = pending.size > 0 ? Math.min(settleMs, pollMs) : pollMs;
      await new Promise<void>((resolve) => {
        const timer = setTimeout(resolve, options.once ? settleMs : delay);
        wake = () => {
          clearTimeout(timer);
          resolve();
        };
      });
      wake = null;
    }
  } finally {
    watcher?.close();
    options.signal?.removeEventListener('abort', wakeUp);
    await log.close();
    await unlink(lock).catch(() => {});
  }
  return run;

  /** Photos complete and not yet processed, oldest first. */
  async function scan(): Promise<Array<{ name: string; sizeBytes: number; mtimeMs: number }>> {
    const names = await readdir(folder);
    const ready: Array<{ name: string; sizeBytes: number; mtimeMs: number }> = [];
    const nowMs = now().getTime();
    for (const name of names) {
      if (name.startsWith('.') || PARTIAL.test(name) || !extensions.some((e) => name.toLowerCase().endsWith(e))) continue;
      const full = path.join(folder, name);
      if (ownFiles.has(path.resolve(full))) continue;
      const s = await stat(full).catch(() => null);
      if (!s?.isFile()) {
        pending.delete(name);
        continue;
      }
      const sizeBytes = s.size;
      const mtimeMs = Math.round(s.mtimeMs);
      const key = recordKey(name, sizeBytes, mtimeMs);
      if (done.has(key)) {
        if (!counted.has(key)) {
          counted.add(key);
          run.skipped++;
        }
        pending.delete(name);
        continue;
      }
      const last = pending.get(name);
      const unchanged = last !== undefined && last.sizeBytes === sizeBytes && last.mtimeMs === mtimeMs;
      // An empty file is taken too once settled (it fails, is logged, and is taken again when it gets content).
      const settled = (unchanged && nowMs - last!.seenMs >= settleMs) || nowMs - mtimeMs >= settleMs;
      if (settled) {
        pending.delete(name);
        ready.push({ name, sizeBytes, mtimeMs });
      } else if (!unchanged) {
        pending.set(name, { sizeBytes, mtimeMs, seenMs: nowMs });
      }
    }
    return ready.sort((a, b) => a.mtimeMs - b.mtimeMs || (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
  }

  async function take(photo: { name: string; sizeBytes: number; mtimeMs: number }): Promise<void> {
    const full = path.join(folder, photo.name);
    const record: WatchRecord = { file: photo.name, sizeBytes: photo.sizeBytes, mtimeMs: photo.mtimeMs, processedAt: now().toISOString() };
    let line: Record<string, unknown>;
    let summary: string;
    try {
      const json = await options.process(full);
      line = { ...json, watch: snake(record) };
      summary = options.summarise ? safeSummary(options.summarise, json, photo.name) : `${photo.name}: done`;
      run.processed++;
    } catch (err) {
      if (!(err instanceof InputError)) {
        const e = err as NodeJS.ErrnoException;
        // A photo that vanished or cannot be read before we got to it: not logged, looked at again if it comes back.
        if (e && (e.code === 'ENOENT' || e.code === 'EACCES' || e.code === 'EBUSY')) {
          note(`${photo.name}: ${e.code === 'ENOENT' ? 'gone before it could be read' : 'cannot be read yet'}; will look again`);
          return;
        }
        throw err;
      }
      line = { file: photo.name, error: err.message, watch: snake(record) };
      summary = `${photo.name}: failed — ${err.message}`;
      run.failed++;
    }
    await log.append(JSON.stringify(line));
    done.add(recordKey(photo.name, photo.sizeBytes, photo.mtimeMs));
    counted.add(recordKey(photo.name, photo.sizeBytes, photo.mtimeMs));
    options.onLine?.(summary);
  }
}

function safeSummary(fn: (json: Record<string, unknown>, name: string) => string, json: Record<string, unknown>, name: string): string {
  try {
    return fn(json, name);
  } catch {
    return `${name}: done`;
  }
}

function snake(r: WatchRecord): Record<string, unknown> {
  return { file: r.file, size_bytes: r.sizeBytes, mtime_ms: r.mtimeMs, processed_at: r.processedAt };
}

function recordKey(name: string, sizeBytes: number, mtimeMs: number): string {
  return `${name}\u0000${sizeBytes}\u0000${mtimeMs}`;
}

/** The photos a log already has (name, size, time), read from its `watch` records; damaged lines are named, skipped. */
export async function readProcessed(logFile: string, note: (message: string) => void = () => {}): Promise<Set<string>> {
  let text: string;
  try {
    text = await readFile(logFile, 'utf8');
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return new Set();
    throw err;
  }
  const done = new Set<string>();
  const lines = text.split('\n');
  lines.forEach((line, i) => {
    if (line.trim() === '') return;
    try {
      const w = (JSON.parse(line) as { watch?: { file?: unknown; size_bytes?: unknown; mtime_ms?: unknown } }).watch;
      if (w && typeof w.file === 'string' && typeof w.size_bytes === 'number' && typeof w.mtime_ms === 'number') {
        done.add(recordKey(w.file, w.size_bytes, w.mtime_ms));
      }
    } catch {
      const torn = i === lines.length - 1;
      note(`${logFile}: line ${i + 1} is ${torn ? 'incomplete (a write was interrupted)' : 'not valid JSON'}; left as it is, its photo will be processed again`);
    }
  });
  return done;
}

/** An append-only log: each line written whole with one write and synced; a torn last line gets a newline first. */
async function openLog(logFile: string): Promise<{ append: (line: string) => Promise<void>; close: () => Promise<void> }> {
  const handle: FileHandle = await open(logFile, 'a+');
  const { size } = await handle.stat();
  let needsNewline = false;
  if (size > 0) {
    const last = Buffer.alloc(1);
    await handle.read(last, 0, 1, size - 1);
    needsNewline = last[0] !== 0x0a;
  }
  return {
    async append(line: string) {
      const data = Buffer.from((needsNewline ? '\n' : '') + line + '\n', 'utf8');
      await handle.write(data, 0, data.length, null);
      await handle.sync();
      needsNewline = false;
    },
    close: () => handle.close(),
  };
}

/** `<log>.lock` holding our pid, so that two watchers never append to one log; a stale lock (dead pid) is replaced. */
async function takeLock(logFile: string): Promise<string> {
  const lock = `${logFile}.lock`;
  for (let attempt = 0; attempt < 2; attempt++) {
    try {
      await writeFile(lock, `${process.pid}\n`, { flag: 'wx' });
      return lock;
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== 'EEXIST') throw err;
      const pid = Number((await readFile(lock, 'utf8').catch(() => '')).trim());
      if (Number.isInteger(pid) && pid > 0 && pid !== process.pid && alive(pid)) {
        throw new InputError(`${logFile}: another glowprint watch (process ${pid}) is writing this log; stop it first, or give another --log`, logFile);
      }
      await unlink(lock).catch(() => {});
    }
  }
  throw new InputError(`${lock}: cannot take the lock file`, lock);
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}
