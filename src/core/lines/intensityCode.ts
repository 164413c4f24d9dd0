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

// (  codes  number  codes  )  codes — the last codes only after a closing parenthesis; no inner spaces.
const CELL = /^([([])?([A-Za-z*:?~]{0,3})(\d+(?:\.\d*)?(?:[eE][+-]?\d+)?|\.\d+)?([A-Za-z*:?~,\-]{0,4})([)\]])?([A-Za-z*:?~,\-]{0,4})$/;

export function readIntensityCode(cell: string): IntensityReading | null {
  const text = cell.trim().replace(/^="?|"$/g, '');
  if (text === '') return { value: null, codes: '' };
  const m = CELL.exec(text.replace(/^([([])\s+|\s+([)\]])$/g, '$1$2'));
  if (!m) return null;
  if (m[6] && !m[5]) return null;
  const value = m[3] === undefined ? null : Number(m[3]);
  if (value !== null && !Number.isFinite(value)) return null;
  const codes = (m[1] || m[5] ? '()' : '') + m[2] + m[4] + m[6];
  if (value === null && codes.length > 4) return null;
  return { value, codes };
}
