import { InputError } from '../errors.js';
import { parseQuantity, unitInHeader } from '../units/quantity.js';

/** One `order:value[±uncertainty]` item as typed on the command line. */
export interface OrderValue {
  order: number;
  value: number;
  /** Per-item uncertainty, when written with ± (or +-). */
  uncertainty?: number;
}

export interface ParseOrderListOptions {
  /** Name of the input in messages (`--positions`). */
  name: string;
  /** Unit the values are returned in, and the unit of bare numbers (`mm`, `deg`). */
  unit: string;
}

/**
 * Reads `"-2:-812.4,-1:-391.8,1:391.9±0.5,2:81.26cm"`: comma- or semicolon-separated items of an integer order, a
 * colon, a value (a bare number is in `unit`; a unit may be written) and an optional ± uncertainty.
 */
export function parseOrderList(text: string, options: ParseOrderListOptions): OrderValue[] {
  const { name, unit } = options;
  const items = String(text)
    .split(/[,;]/)
    .map((s) => s.trim())
    .filter((s) => s !== '');
  if (items.length === 0) throw new InputError(`${name}: expected items like "1:391.9,2:812.6" (order:value), got ${JSON.stringify(text)}`, name);
  return items.map((item) => {
    const m = /^([+-]?\d+)\s*:\s*(.+?)(?:\s*(?:±|\+-|\+\/-)\s*(.+))?$/.exec(item);
    if (!m) throw new InputError(`${name}: expected order:value (for example "1:391.9" or "-1:-391.8±0.5"), got ${JSON.stringify(item)}`, name);
    const order = Number(m[1]);
    const value = parseQuantity(m[2], { name: `${name} (order ${order})`, unit });
    const uncertainty = m[3] === undefined ? undefined : parseQuantity(m[3], { name: `${name} (order ${order} uncertainty)`, unit, positive: true });
    return uncertainty === undefined ? { order, value } : { order, value, uncertainty };
  });
}

export interface OrderTable {
  kind: 'position' | 'separation' | 'angle';
  items: OrderValue[];
}

/**
 * Interprets a numeric table of measurements (from parseNumericCsv): an `order` column and one of `position`,
 * `separation` or `angle` (units in the header, e.g. `position_mm`, `position (cm)`, `angle_deg`; mm and deg when
 * none), optionally an `uncertainty` column in the same kind of unit.
 */
export function ordersFromTable(
  table: { header: string[] | null; rows: number[][]; lineNumbers: number[] },
  source: string,
): OrderTable {
  if (!table.header) throw new InputError(`${source}: expected a header row naming the columns, e.g. order,position_mm,uncertainty_mm`, source);
  const names = table.header.map((h) => h.toLowerCase());
  const find = (re: RegExp): number => names.findIndex((h) => re.test(h));
  const orderCol = find(/^(order|m)(?![a-z])/);
  const kinds = [
    { kind: 'position' as const, col: find(/^(position|x)(?![a-z])/), unit: 'mm' },
    { kind: 'separation' as const, col: find(/^(separation|spacing)(?![a-z])/), unit: 'mm' },
    { kind: 'angle' as const, col: find(/^(angle|theta|θ)(?![a-z])/), unit: 'deg' },
  ].filter((k) => k.col >= 0);
  if (orderCol < 0 || kinds.length !== 1) {
    throw new InputError(
      `${source}: expected an "order" column and one of "position_mm", "separation_mm" or "angle_deg" (found ${table.header.map((h) => JSON.stringify(h)).join(', ')})`,
      source,
    );
  }
  const { kind, col, unit } = kinds[0];
  const uncCol = find(/^(uncertainty|sigma|u|σ)(?![a-z])/);
  const scaleOf = (c: number): number => {
    const written = unitInHeader(table.header![c]).unit;
    if (!written) return 1;
    const factor = parseQuantityUnit(written.symbol, unit);
    if (factor === null) {
      throw new InputError(`${source}: column ${JSON.stringify(table.header![c])} is in ${written.symbol}; expected ${kind === 'angle' ? 'an angle' : 'a length'}`, source);
    }
    return factor;
  };
  const scale = scaleOf(col);
  const uncScale = uncCol >= 0 ? scaleOf(uncCol) : 1;
  const items = table.rows.map((row, i) => {
    const order = row[orderCol];
    if (!Number.isInteger(order)) throw new InputError(`${source}, line ${table.lineNumbers[i]}: a diffraction order is a whole number, got ${order}`, source);
    const item: OrderValue = { order, value: row[col] * scale };
    if (uncCol >= 0) item.uncertainty = row[uncCol] * uncScale;
    return item;
  });
  if (items.length === 0) throw new InputError(`${source}: no measurements`, source);
  return { kind, items };
}

/** Size of a header's unit in `target` (e.g. cm → 10 for mm), or null when the text is not such a unit. */
function parseQuantityUnit(unitText: string, target: string): number | null {
  try {
    return parseQuantity(`1 ${unitText}`, { name: 'unit', unit: target });
  } catch {
    return null;
  }
}
