import type { ReportSection } from '../buildReport.js';

/** What a result's JSON holds: one per command. */
export type ResultKind = 'spectrum' | 'calibration' | 'identification' | 'polarization' | 'grating' | 'modes';

/** The command whose --json prints each kind (the `"command"` key of a result). */
export const COMMAND_OF_KIND: Readonly<Record<ResultKind, string>> = {
  spectrum: 'spectrum',
  calibration: 'calibrate',
  identification: 'identify',
  polarization: 'polarization',
  grating: 'grating',
  modes: 'modes',
};

/** How each kind is named to a reader. */
export const KIND_LABEL: Readonly<Record<ResultKind, string>> = {
  spectrum: 'Spectrum and peaks',
  calibration: 'Wavelength calibration',
  identification: 'Gas identification',
  polarization: 'Polarization',
  grating: 'Grating line density',
  modes: 'Laser modes',
};

export interface SectionOptions {
  /** For drawing the plots (the browser's document, or src/io/svgDocument's on Node). */
  document: Document;
  /** Anchor id of the section. @default the kind */
  id?: string;
  /** Where the result came from (its JSON file), named when the result itself does not say which input it measured. */
  source?: string;
}

/** One row of the report's summary table: one result. */
export interface SummaryRow {
  /** The section it summarises. */
  id: string;
  /** What was measured: the photo, the table, the trace(s). */
  item: string;
  /** KIND_LABEL of the result. */
  measurement: string;
  /** The answer in a few words. */
  result: string;
  /** The figure that matters most, with its uncertainty. */
  keyFigure: string;
  warnings: number;
}

/** A result turned into a report section and its summary row. */
export interface ResultSection {
  /** 'failed': a batch entry that could not be measured (its error is the section's warning). */
  kind: ResultKind | 'failed';
  section: ReportSection;
  summary: SummaryRow;
}
