/**
 * YUV4MPEG2 (.y4m) video for Chromium's fake camera (--use-file-for-fake-video-capture): a text header, then per
 * frame "FRAME\n" and the Y, Cb, Cr planes, 4:2:0 (chroma averaged over 2×2 pixels). The RGB → Y′CbCr conversion is
 * ITU-R BT.601 with studio swing (Y′ 16–235, Cb/Cr 16–240), the matrix Chromium applies in reverse to this format
 * (BT.601: Y′ = 16 + 65.481 R′ + 128.553 G′ + 24.966 B′, Cb = 128 − 37.797 R′ − 74.203 G′ + 112 B′,
 * Cr = 128 + 112 R′ − 93.786 G′ − 18.214 B′, with R′G′B′ in [0, 1]).
 */
import { writeFileSync } from 'node:fs';

export interface Y4mFrame {
  /** 8-bit gamma-encoded RGB, interleaved, width × height × 3. */
  rgb: Uint8Array;
}

export function rgbToI420(rgb: Uint8Array, width: number, height: number): Buffer {
  if (width % 2 || height % 2) throw new Error(`y4m 4:2:0 needs even sizes, got ${width}×${height}`);
  const ySize = width * height;
  const cSize = (width / 2) * (height / 2);
  const out = Buffer.alloc(ySize + 2 * cSize);
  const clamp = (v: number): number => Math.max(0, Math.min(255, Math.round(v)));
  for (let i = 0; i < ySize; i++) {
    const r = rgb[3 * i] / 255;
    const g = rgb[3 * i + 1] / 255;
    const b = rgb[3 * i + 2] / 255;
    out[i] = clamp(16 + 65.481 * r + 128.553 * g + 24.966 * b);
  }
  for (let y = 0; y < height / 2; y++) {
    for (let x = 0; x < width / 2; x++) {
      let r = 0;
      let g = 0;
      let b = 0;
      for (const [dx, dy] of [
        [0, 0],
        [1, 0],
        [0, 1],
        [1, 1],
      ]) {
        const i = (2 * y + dy) * width + 2 * x + dx;
        r += rgb[3 * i];
        g += rgb[3 * i + 1];
        b += rgb[3 * i + 2];
      }
      r /= 4 * 255;
      g /= 4 * 255;
      b /= 4 * 255;
      const k = y * (width / 2) + x;
      out[ySize + k] = clamp(128 - 37.797 * r - 74.203 * g + 112 * b);
      out[ySize + cSize + k] = clamp(128 + 112 * r - 93.786 * g - 18.214 * b);
    }
  }
  return out;
}

/** Writes the frames as a .y4m file (progressive, square pixels, 4:2:0). */
export function writeY4m(file: string, frames: readonly Y4mFrame[], width: number, height: number, fps = 30): void {
  const parts: Buffer[] = [Buffer.from(`YUV4MPEG2 W${width} H${height} F${fps}:1 Ip A1:1 C420jpeg\n`, 'ascii')];
  for (const f of frames) {
    if (f.rgb.length !== width * height * 3) throw new Error(`y4m frame: expected ${width * height * 3} bytes, got ${f.rgb.length}`);
    parts.push(Buffer.from('FRAME\n', 'ascii'), rgbToI420(f.rgb, width, height));
  }
  writeFileSync(file, Buffer.concat(parts));
}
