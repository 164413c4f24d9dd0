import { invalid } from '../errors.js';

const ROMAN = ['I', 'II', 'III', 'IV', 'V', 'VI', 'VII', 'VIII', 'IX', 'X'];

/** Element symbols accepted in spectrum names (Z = 1–99). */
const ELEMENTS = new Set(
  (
    'H He Li Be B C N O F Ne Na Mg Al Si P S Cl Ar K Ca Sc Ti V Cr Mn Fe Co Ni Cu Zn Ga Ge As Se Br Kr Rb Sr Y Zr Nb ' +
    'Mo Tc Ru Rh Pd Ag Cd In Sn Sb Te I Xe Cs Ba La Ce Pr Nd Pm Sm Eu Gd Tb Dy Ho Er Tm Yb Lu Hf Ta W Re Os Ir Pt Au Hg ' +
    'Tl Pb Bi Po At Rn Fr Ra Ac Th Pa U Np Pu Am Cm Bk Cf Es'
  ).split(' '),
);

export interface SpectrumName {
  element: string;
  /** 1 for the neutral atom (I), 2 for the singly charged ion (II), … */
  ionStage: number;
  /** Canonical notation, e.g. `Ne I`. */
  spectrum: string;
}

/** Canonical spectrum notation from an element and an ion stage: ('Ar', 2) → 'Ar II'. */
export function formatSpectrum(element: string, ionStage: number): string {
  return `${element} ${ROMAN[ionStage - 1] ?? String(ionStage)}`;
}

/** Whether `symbol` is a chemical element symbol (case as written: 'Ne', not 'NE'). */
export function isElementSymbol(symbol: string): boolean {
  return ELEMENTS.has(symbol);
}

/** The element symbol in any capitalisation ('ne', 'NE' → 'Ne'), or null. */
export function normalizeElement(text: string): string | null {
  const t = text.trim();
  if (t.length === 0 || t.length > 2) return null;
  const s = t[0].toUpperCase() + t.slice(1).toLowerCase();
  return ELEMENTS.has(s) ? s : null;
}

/**
 * Reads a spectrum name as written in line lists and ASD exports: `Ne I`, `Ar II`, `NeI`, `Hg 1`, `ne i`, `He` (the
 * neutral atom). Throws an InputError (named `name`) for anything else.
 */
export function parseSpectrumName(text: string, name = 'spectrum'): SpectrumName {
  const t = text.trim();
  // Spaced ('ne i', 'Ar II', 'Hg 1') in any case; compact ('NeI', 'HgII') only with the element's own case, so that
  // 'Ni' stays nickel rather than N I.
  const m = /^([A-Za-z]{1,2})\s+([IVXivx]+|\d{1,2})$/.exec(t) ?? /^([A-Z][a-z]?)([IVX]+|\d{1,2})?$/.exec(t) ?? /^([A-Za-z]{1,2})$/.exec(t);
  const element = m ? normalizeElement(m[1]) : null;
  const bad = () => invalid(name, "a spectrum such as 'Ne I' or 'Ar II'", text);
  if (!m || !element) throw bad();
  let ionStage = 1;
  const stage = m[2];
  if (stage !== undefined) {
    ionStage = /^\d+$/.test(stage) ? Number(stage) : ROMAN.indexOf(stage.toUpperCase()) + 1;
    if (ionStage < 1) throw bad();
  }
  return { element, ionStage, spectrum: formatSpectrum(element, ionStage) };
}
