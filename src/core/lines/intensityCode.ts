/**
 * Relative intensities as NIST ASD and the Handbook print them: a number with character codes before or after it
 * (`1000h` hazy, `50*` intensity shared by several lines, `200bl` blended, `9c` complex, `5w` wide, `(200)` in
 * parentheses, `300P` persistent), or only codes with no number. Only the number is kept; the codes are returned for
 * notes (ASD line-list help, "Relative intensity" codes).
 */
export interface IntensityReading {
  /** The number, or null when the cell has none (blank, or codes alone). */
  value: number | null;
  /** The characters around the number, as written (e.g. 'h', '*', 'bl', '()'). */
  codes: string;
}

const CELL = /^[([]?\s*([A-Za-z*:?~]{0,4})\s*(\d+(?:\.\d*)?(?:[eE][+-]?\d+)?|\.\d+)?\s*([A-Za-z*:?~,\-]{0,6})\s*[)\]]?\s*([A-Za-z*:?~,\-]{0,6})$/;

/** Reads one intensity cell; returns null when the cell is not an intensity at all (garbage). */
export function readIntensityCode(cell: string): IntensityReading | null {
  const text = cell.trim().replace(/^="?|"$/g, '');
  if (text === '') return { value: null, codes: '' };
  const m = CELL.exec(text);
  if (!m) return null;
  const value = m[2] === undefined ? null : Number(m[2]);
  if (value !== null && !Number.isFinite(value)) return null;
  const parens = /^[([]/.test(text) ? '()' : '';
  return { value, codes: parens + m[1] + m[3] + m[4] };
}
