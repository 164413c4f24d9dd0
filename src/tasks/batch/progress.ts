import cliProgress from 'cli-progress';
import path from 'node:path';
import type { BatchItem, PoolOptions } from './pool.js';

/** The progress bar of a batch on stderr: only for several files and only on a terminal (never in a pipe or a log). */
export function batchProgress(label: string, total: number, stream: NodeJS.WriteStream = process.stderr): { onSettled: NonNullable<PoolOptions['onSettled']>; stop: () => void } {
  if (total < 2 || !stream.isTTY) return { onSettled: () => {}, stop: () => {} };
  const bar = new cliProgress.SingleBar(
    { format: `${label} [{bar}] {value}/{total} {failed}{file}`, stream, clearOnComplete: true, hideCursor: true },
    cliProgress.Presets.shades_classic,
  );
  let failures = 0;
  bar.start(total, 0, { file: '', failed: '' });
  return {
    onSettled: (item: BatchItem, settled: number) => {
      if (item.status === 'failed') failures++;
      bar.update(settled, { file: path.basename(item.file), failed: failures ? `(${failures} failed) ` : '' });
    },
    stop: () => bar.stop(),
  };
}
