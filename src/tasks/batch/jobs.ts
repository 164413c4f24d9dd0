/**
 * What a batch does to each file, per command: the job description (plain data, so it crosses to a worker thread by
 * structured clone) and the function that runs it on one file. The pool's workers and its in-process path both call
 * runJob, so a file's result does not depend on where it was measured.
 */
import type { InstrumentProfile } from '../../core/calibration/profile.js';
import type { ListedLine } from '../../core/lines/index.js';
import { writeFileAtomic } from '../../io/writeAtomic.js';
import { formatIdentification, identificationJson, identificationSvg, identifyFile } from '../identify.js';
import { analyseSpectrumInput, formatSpectrumTable, photoGeometryOf, spectrumSvg, spectrumToCsv, type AnalyseSpectrumOptions } from '../spectrum.js';
import { perInputName } from './perInputName.js';

/** `glowprint identify` on each file: the profile and line list are read once, in the main thread. */
export interface IdentifyJob {
  command: 'identify';
  profile?: InstrumentProfile;
  lines: ListedLine[];
  /** `--svg`: one labelled plot per input (svgTarget names them). */
  svg?: string;
  /** Several inputs (the plots get the input's name). */
  several: boolean;
  /** Every file the run reads: no output may be written over one. */
  readFiles: string[];
}

/** `glowprint spectrum` on each file, with the options of the command (the profile read once, in the main thread). */
export type SpectrumJob = Omit<AnalyseSpectrumOptions, 'onStage'> & {
  command: 'spectrum';
  /** `--csv`, `--svg`: one file per input (perInputName names them). */
  csv?: string;
  svg?: string;
  several: boolean;
  readFiles: string[];
};

export type BatchJob = IdentifyJob | SpectrumJob;
export type BatchCommand = BatchJob['command'];

/** One file measured: the command's JSON object (camelCase, before snake_case), its readable text and its warnings. */
export interface JobResult {
  json: Record<string, unknown>;
  text: string;
  warnings: string[];
}

/** Runs the job on one file; throws what the command would throw for it. */
export async function runJob(job: BatchJob, file: string): Promise<JobResult> {
  switch (job.command) {
    case 'identify': {
      const r = await identifyFile(file, { profile: job.profile, lines: job.lines });
      if (job.svg) await writeFileAtomic(perInputName(job.svg, file, job.several, '.svg'), identificationSvg(r), { inputs: job.readFiles });
      return { json: identificationJson(r), text: formatIdentification(r), warnings: r.warnings };
    }
    case 'spectrum': {
      const { command: _command, csv, svg, several, readFiles, ...options } = job;
      const run = await analyseSpectrumInput(file, options);
      // Outputs only once the file has been measured: a bad input leaves no half-written files.
      if (csv) await writeFileAtomic(perInputName(csv, file, several), spectrumToCsv(run.spectrum, photoGeometryOf(run), run.analysis.calibration?.medium), { inputs: readFiles });
      if (svg) await writeFileAtomic(perInputName(svg, file, several), spectrumSvg(run), { inputs: readFiles });
      return { json: { command: 'spectrum', ...run.analysis }, text: formatSpectrumTable(run.analysis), warnings: run.analysis.warnings };
    }
  }
}
