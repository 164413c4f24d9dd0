import type { SpectralLine } from '../types.js';

/** What produces a listed line: an atomic transition, a laser, a lamp phosphor, or a molecular band head. */
export type LineKind = 'atomic' | 'laser' | 'phosphor' | 'band-head';

/** One entry of the project's line list or of an imported list. */
export interface ListedLine extends SpectralLine {
  /** 1 for a neutral atom (`Ne I`), 2 for a singly charged ion; 0 where it does not apply (lasers, phosphors, bands). */
  ionStage: number;
  kind: LineKind;
  /** A persistent line of the spectrum (flag P in the project's list). */
  persistent: boolean;
  /** Strong and well isolated: suited to wavelength calibration (flag S; persistent lines count too). */
  strong: boolean;
  /** Several transitions unresolved at ~0.05 nm, listed as one (flag B). */
  blend: boolean;
  /** Width of a broad feature (FWHM, nm): phosphor bands; absent for narrow lines. */
  widthNm?: number;
  /** Free text from the list: transition, neighbours, caveats. */
  note?: string;
}

/** A parse result: the lines, the problems that were skipped over, and where each line came from. */
export interface LineListResult {
  lines: ListedLine[];
  warnings: string[];
  /** Which reader understood the text. */
  format: 'line-table' | 'nist-asd-ascii' | 'nist-asd-csv' | 'nist-asd-tab';
}
