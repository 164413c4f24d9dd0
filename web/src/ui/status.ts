/** The status line: one polite live region for progress and results, errors shown until the next message. */
import { h } from './dom.js';

let region: HTMLElement | null = null;

export function statusRegion(): HTMLElement {
  region ??= h('div', { class: 'status', role: 'status', 'aria-live': 'polite', id: 'status' });
  return region;
}

export function say(message: string, kind: 'info' | 'ok' | 'error' | 'busy' = 'info'): void {
  const r = statusRegion();
  r.textContent = message;
  r.dataset.kind = kind;
}

/** Runs `task`, showing `busy` meanwhile and the error's message if it fails (bad input is the user's to fix). */
export async function withStatus<T>(busy: string, task: () => Promise<T>, done?: (value: T) => string): Promise<T | undefined> {
  say(busy, 'busy');
  try {
    const value = await task();
    say(done ? done(value) : 'Done.', 'ok');
    return value;
  } catch (err) {
    say((err as Error).message ?? String(err), 'error');
    if (!(err instanceof Error) || err.name !== 'InputError') console.error(err);
    return undefined;
  }
}
