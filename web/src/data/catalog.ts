/**
 * The project's line list, lamps and lasers, bundled into the page at build time (Vite `?raw` imports of data/), so
 * identification and lamp calibration run with no server round trip and the same data as the CLI.
 */
import { parseLampDefinitions, parseLaserDefinitions, parseLineTable, type LampCatalog, type ListedLine } from '../../../src/core/lines/index.js';
import lampsText from '../../../data/lamps.json?raw';
import lasersText from '../../../data/lasers.json?raw';

const lineTexts = import.meta.glob<string>('../../../data/lines/*.tsv', { query: '?raw', import: 'default', eager: true });

let catalog: LampCatalog | undefined;

/** Every line of data/lines/*.tsv (sorted by wavelength), the lamps of data/lamps.json and the lasers of data/lasers.json. */
export function lampCatalog(): LampCatalog {
  if (catalog) return catalog;
  const lines: ListedLine[] = [];
  for (const [file, text] of Object.entries(lineTexts).sort(([a], [b]) => a.localeCompare(b))) {
    const name = file.slice(file.lastIndexOf('/') + 1);
    lines.push(...parseLineTable(text, { source: `data/lines/${name}` }).lines);
  }
  lines.sort((a, b) => a.wavelengthNm - b.wavelengthNm);
  catalog = {
    lines,
    lamps: parseLampDefinitions(JSON.parse(lampsText), 'data/lamps.json'),
    lasers: parseLaserDefinitions(JSON.parse(lasersText), 'data/lasers.json'),
  };
  return catalog;
}
