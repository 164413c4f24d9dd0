import { InputError } from '../errors.js';

export interface JcampSpectrumOptions {
  title: string;
  /** Free text for ##ORIGIN. @default 'glowprint' */
  origin?: string;
  /** @default 'unknown' */
  owner?: string;
  /** ISO date-time for ##LONGDATE. @default now */
  date?: Date;
  /** Extra labelled records as [label, value] (label without ##, upper case; user labels start with $). */
  extra?: Array<[string, string]>;
  /** @default 'NANOMETERS' */
  xUnits?: string;
  /** @default 'ARBITRARY UNITS' */
  yUnits?: string;
}

/** Significant integer digits kept for Y after scaling by YFACTOR. */
const Y_DIGITS = 1e6;

/**
 * Writes a spectrum as JCAMP-DX 4.24 text (McDonald & Wilks 1988, Appl. Spectrosc. 42, 151; IUPAC revision) in the
 * ##XYDATA=(X++(Y..Y)) table form with AFFN numbers. XYDATA needs equally spaced abscissae, so a spectrum sampled on
 * an uneven wavelength grid (a camera's non-linear dispersion) is first resampled linearly onto an even grid with
 * the same number of points over the same range.
 */
export function spectrumToJcampDx(
  xValues: ArrayLike<number>,
  yValues: ArrayLike<number>,
  options: JcampSpectrumOptions,
): string {
  const n = xValues.length;
  if (n < 2 || yValues.length !== n) {
    throw new InputError(`JCAMP-DX export: expected at least 2 points with one y per x, got ${n} x and ${yValues.length} y`);
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => xValues[a] - xValues[b]);
  const xs = order.map((i) => xValues[i]);
  const ys = order.map((i) => yValues[i]);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(xs[i]) || !Number.isFinite(ys[i])) {
      throw new InputError(`JCAMP-DX export: point ${i + 1} is not a finite number`);
    }
  }
  const firstX = xs[0];
  const lastX = xs[n - 1];
  if (!(lastX > firstX)) throw new InputError('JCAMP-DX export: the x values span no range');
  const deltaX = (lastX - firstX) / (n - 1);
  const even = new Float64Array(n);
  let k = 0;
  for (let i = 0; i < n; i++) {
    const x = firstX + i * deltaX;
    while (k < n - 2 && xs[k + 1] < x) k++;
    const t = xs[k + 1] === xs[k] ? 0 : (x - xs[k]) / (xs[k + 1] - xs[k]);
    even[i] = ys[k] + Math.min(1, Math.max(0, t)) * (ys[k + 1] - ys[k]);
  }
  let minY = Infinity;
  let maxY = -Infinity;
  for (const y of even) {
    minY = Math.min(minY, y);
    maxY = Math.max(maxY, y);
  }
  const yFactor = Math.max(Math.abs(minY), Math.abs(maxY)) / Y_DIGITS || 1;
  const xFactor = 1e-6;
  const header: Array<[string, string]> = [
    ['TITLE', options.title],
    ['JCAMP-DX', '4.24'],
    ['DATA TYPE', 'EMISSION SPECTRUM'],
    ['ORIGIN', options.origin ?? 'glowprint'],
    ['OWNER', options.owner ?? 'unknown'],
    ['LONGDATE', (options.date ?? new Date()).toISOString().replace('T', ' ').replace(/\.\d+Z$/, '')],
    ...(options.extra ?? []),
    ['XUNITS', options.xUnits ?? 'NANOMETERS'],
    ['YUNITS', options.yUnits ?? 'ARBITRARY UNITS'],
    ['XFACTOR', String(xFactor)],
    ['YFACTOR', yFactor.toPrecision(12)],
    ['FIRSTX', fmt(firstX)],
    ['LASTX', fmt(lastX)],
    ['DELTAX', fmt(deltaX)],
    ['MINX', fmt(firstX)],
    ['MAXX', fmt(lastX)],
    ['MINY', fmt(minY)],
    ['MAXY', fmt(maxY)],
    ['NPOINTS', String(n)],
    ['FIRSTY', fmt(even[0])],
  ];
  const lines = header.map(([label, value]) => `##${label}=${value.replace(/\r?\n/g, ' ')}`);
  lines.push('##XYDATA=(X++(Y..Y))');
  let i = 0;
  while (i < n) {
    let line = String(Math.round((firstX + i * deltaX) / xFactor));
    let count = 0;
    while (i < n && count < 10) {
      const cell = ' ' + String(Math.round(even[i] / yFactor));
      if (line.length + cell.length > 80) break;
      line += cell;
      i++;
      count++;
    }
    lines.push(line);
  }
  lines.push('##END=');
  return lines.join('\n') + '\n';
}

function fmt(v: number): string {
  return Number(v.toPrecision(10)).toString();
}
