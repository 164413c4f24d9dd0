/** What an uploaded or named file really is, from its first bytes (never from its name or declared type). */
export type SniffedKind = 'jpeg' | 'png' | 'tiff' | 'webp' | 'text' | 'unknown';

export function sniffKind(bytes: Uint8Array): SniffedKind {
  const b = bytes;
  if (b.length >= 3 && b[0] === 0xff && b[1] === 0xd8 && b[2] === 0xff) return 'jpeg';
  if (b.length >= 8 && b[0] === 0x89 && b[1] === 0x50 && b[2] === 0x4e && b[3] === 0x47 && b[4] === 0x0d && b[5] === 0x0a) return 'png';
  if (b.length >= 4 && ((b[0] === 0x49 && b[1] === 0x49 && b[2] === 0x2a && b[3] === 0) || (b[0] === 0x4d && b[1] === 0x4d && b[2] === 0 && b[3] === 0x2a))) return 'tiff';
  if (b.length >= 12 && ascii(b, 0, 4) === 'RIFF' && ascii(b, 8, 12) === 'WEBP') return 'webp';
  if (looksLikeText(b)) return 'text';
  return 'unknown';
}

export function isImageKind(kind: SniffedKind): boolean {
  return kind === 'jpeg' || kind === 'png' || kind === 'tiff' || kind === 'webp';
}

function ascii(b: Uint8Array, from: number, to: number): string {
  return String.fromCharCode(...b.subarray(from, to));
}

/** UTF-8 text with no NUL and few control characters in its first 4 KiB. */
function looksLikeText(b: Uint8Array): boolean {
  if (b.length === 0) return false;
  const n = Math.min(b.length, 4096);
  let control = 0;
  for (let i = 0; i < n; i++) {
    const c = b[i];
    if (c === 0) return false;
    if (c < 9 || (c > 13 && c < 32)) control++;
  }
  if (control > n / 100) return false;
  try {
    new TextDecoder('utf-8', { fatal: true }).decode(b.subarray(0, n - trailingPartial(b, n)));
    return true;
  } catch {
    return false;
  }
}

/** Bytes of a UTF-8 sequence cut off at position n. */
function trailingPartial(b: Uint8Array, n: number): number {
  if (n === b.length) return 0;
  for (let k = 1; k <= 3 && n - k >= 0; k++) {
    const c = b[n - k];
    if ((c & 0xc0) === 0xc0) return k;
    if ((c & 0x80) === 0) return 0;
  }
  return 0;
}
