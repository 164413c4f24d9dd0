/**
 * One colour per species for the plot labels and the identification list, from the app's own palette (hues kept
 * apart from each other and from the amber peak markers on the dark plot). Colours follow the ranking of the current
 * identification, so the species judged present always get the first, most distinct ones.
 */
import type { Identification } from '../../../src/core/identify/identifySpecies.js';

const PALETTE = ['#7dd3fc', '#f472b6', '#a3e635', '#c4b5fd', '#fdba74', '#34d399', '#fb7185', '#fde047'];
const OTHER = '#94a3b8';

export function speciesColours(identification: Identification | null | undefined): (element: string) => string {
  const map = new Map<string, string>();
  for (const s of identification?.species ?? []) {
    if (map.size >= PALETTE.length) break;
    map.set(s.element, PALETTE[map.size]);
  }
  return (element) => map.get(element) ?? OTHER;
}
