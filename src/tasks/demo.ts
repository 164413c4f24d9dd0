import { promises as fs } from 'node:fs';
import path from 'node:path';
import { toSnakeCase } from '../core/json/toSnakeCase.js';
import { buildReport } from '../core/report/buildReport.js';
import { sectionFromResult, summaryTable } from '../core/report/sections/index.js';
import type { ResultSection } from '../core/report/sections/index.js';
import { dataPath, packageVersion } from '../io/projectRoot.js';
import { createSvgDocument } from '../io/svgDocument.js';
import { writeFileAtomic } from '../io/writeAtomic.js';
import { spectrumToJcampDx } from '../core/export/jcampDx.js';
import type { InstrumentProfile } from '../core/calibration/profile.js';
import { loadLineList } from '../io/lineList.js';
import { readProfile } from '../io/profileFile.js';
import { runCalibrate } from './calibrate.js';
import { identificationJson, identifyFile } from './identify.js';
import { runGrating } from './grating.js';
import { runModes } from './modes.js';
import { runPolarization } from './polarization.js';

/** One measurement of the demo: a name for its files, what it is, and how to run it. */
export interface DemoStep {
  name: string;
  title: string;
  run: () => Promise<{ json: Record<string, unknown>; warnings: string[]; extraFiles?: Array<{ file: string; data: string }> }>;
}

export interface DemoOptions {
  /** Folder the report goes to. @default 'report' */
  outDir?: string;
  /** Told about each step as it starts (progress on stderr). */
  onStep?: (index: number, total: number, step: DemoStep) => void;
}

export interface DemoOutcome {
  outDir: string;
  files: string[];
  summary: ResultSection['summary'][];
  failures: Array<{ step: string; error: string }>;
}

/**
 * The bundled scenario, end to end: the steps a stockroom audit takes with the demo data in data/demo — calibrate
 * the rig on the fluorescent bulb, identify each tube, check the analyser and the lasers, measure the gratings and
 * the laser modes — then one report with every result, its plots and the cautions. A failing step is reported and
 * the rest go on.
 */
export async function runDemo(options: DemoOptions = {}): Promise<DemoOutcome> {
  const outDir = path.resolve(options.outDir ?? 'report');
  // Inputs named relative to the working folder when they lie inside it, so results and the report read naturally.
  const demo = (...p: string[]): string => {
    const full = dataPath('demo', ...p);
    const rel = path.relative(process.cwd(), full);
    return rel.startsWith('..') || path.isAbsolute(rel) ? full : rel;
  };
  const work = (...p: string[]): string => {
    const full = path.join(outDir, ...p);
    const rel = path.relative(process.cwd(), full);
    return rel.startsWith('..') || path.isAbsolute(rel) ? full : rel;
  };
  await fs.mkdir(work('results'), { recursive: true });
  const analyser = work('analyser-a.json');
  const pol = (...p: string[]): string => demo('polarization', ...p);
  const photos = async (folder: string): Promise<string[]> =>
    (await fs.readdir(pol(folder))).filter((f) => /\.jpe?g$/i.test(f)).sort().map((f) => pol(folder, f));
  const steps: DemoStep[] = [
    ...spectroscopeSteps(demo, work),
    {
      name: 'analyser-a',
      title: 'Analyser A: scale offset from floor glare',
      run: () => runPolarization([], { table: pol('floor-glare.csv'), calibrateAnalyser: true, referenceAzimuth: '0', out: analyser, name: 'analyser A' }),
    },
    {
      name: 'laser-a',
      title: 'Laser A (power meter)',
      run: () => runPolarization([], { table: pol('laser-a-power-meter.csv'), analyser, extinctionRatio: '300' }),
    },
    {
      name: 'laser-b',
      title: 'Laser B (rotation and two-minute burst)',
      run: () =>
        runPolarization([], {
          table: pol('laser-b-rotation.csv'),
          timeSeries: pol('laser-b-burst.csv'),
          reference: pol('laser-b-burst-total.csv'),
          simultaneous: true,
        }),
    },
    {
      name: 'laser-c',
      title: 'Laser C (photo series)',
      run: async () => runPolarization(await photos('laser-c-photos'), { analyser, extinctionRatio: '300' }),
    },
    {
      name: 'laser-c-overexposed',
      title: 'Laser C, overexposed series',
      run: async () => runPolarization(await photos('laser-c-overexposed'), { analyser, extinctionRatio: '300' }),
    },
    {
      name: 'grating-c',
      title: 'Grating slide C (screen)',
      run: () =>
        runGrating({
          table: demo('grating', 'slide-c-screen.csv'),
          wavelength: '632.816',
          distance: '850',
          distanceUncertainty: '2',
          nominal: '600',
          tolerance: '2%',
          angleReference: 'undeviated',
        }),
    },
    {
      name: 'grating-d',
      title: 'Grating slide D (spectrometer table)',
      run: () =>
        runGrating({
          table: demo('grating', 'slide-d-goniometer.csv'),
          wavelength: '632.816',
          angleUncertainty: '0.017',
          nominal: '300',
          tolerance: '1%',
          angleReference: 'undeviated',
        }),
    },
    {
      name: 'modes-warmup',
      title: 'Shelf HeNe warm-up (scanning Fabry-Perot)',
      run: async () => {
        const traces = (await fs.readdir(demo('modes'))).filter((f) => f.endsWith('.csv')).sort().map((f) => demo('modes', f));
        return runModes(traces, { mirrorSpacing: '7.5mm', confocal: true, refractiveIndex: '1', envelope: 'above-threshold' });
      },
    },
  ];

  const document = createSvgDocument();
  const files: string[] = [];
  const sections: ResultSection[] = [];
  const failures: DemoOutcome['failures'] = [];
  for (const [i, step] of steps.entries()) {
    options.onStep?.(i, steps.length, step);
    try {
      const run = await step.run();
      const json = toSnakeCase({ ...run.json, warnings: [...new Set([...(run.json.warnings as string[] | undefined ?? []), ...run.warnings])] }) as Record<string, unknown>;
      const file = work('results', `${step.name}.json`);
      await writeFileAtomic(file, JSON.stringify(json, null, 2) + '\n');
      files.push(file);
      for (const extra of run.extraFiles ?? []) {
        await writeFileAtomic(work(extra.file), extra.data);
        files.push(work(extra.file));
      }
      const section = sectionFromResult(json, { document, id: step.name, source: step.title });
      section.section.heading = `${step.title}`;
      sections.push(section);
    } catch (err) {
      const message = err instanceof Error ? err.message : String(err);
      failures.push({ step: step.name, error: message });
      sections.push(sectionFromResult({ error: message, file: step.title }, { document, id: step.name }));
    }
  }
  const summary = sections.map((s) => s.summary);
  const html = buildReport({
    title: 'Tarnwick Polytechnic stockroom audit — demo report',
    intro:
      'Synthetic demo data bundled with glowprint (a fictional stockroom audit): a fluorescent-bulb calibration of a phone ' +
      'spectroscope, five discharge tubes, three HeNe lasers through a polarizer, two gratings and a scanning Fabry-Perot warm-up.',
    summary: summaryTable(summary),
    sections: sections.map((s) => s.section),
    version: packageVersion(),
  });
  await writeFileAtomic(work('index.html'), html);
  files.push(work('index.html'));
  const csv = ['item,measurement,result,key_figure,warnings', ...summary.map((r) => [r.item, r.measurement, r.result, r.keyFigure, String(r.warnings)].map(csvCell).join(','))];
  await writeFileAtomic(work('summary.csv'), csv.join('\n') + '\n');
  files.push(work('summary.csv'));
  return { outDir, files, summary, failures };
}

function csvCell(v: string): string {
  return /[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
}

/** Calibration on the fluorescent bulb, then each tube identified with that profile, its spectrum exported. */
function spectroscopeSteps(demo: (...p: string[]) => string, work: (...p: string[]) => string): DemoStep[] {
  const profileFile = work('rig-profile.json');
  let profile: InstrumentProfile | undefined;
  const tubes = ['tube-a', 'tube-b', 'tube-c', 'tube-d', 'tube-e'];
  return [
    {
      name: 'calibration',
      title: 'Rig calibration on the fluorescent bulb',
      run: async () => {
        const { report, profile: made } = await runCalibrate(demo('cfl-calibration.jpg'), {
          lamp: 'fluorescent',
          model: 'auto',
          direction: 'either',
          out: profileFile,
        });
        profile = made;
        return { json: { command: 'calibrate', ...(report as unknown as Record<string, unknown>) }, warnings: [] };
      },
    },
    ...tubes.map(
      (tube): DemoStep => ({
        name: tube,
        title: `Tube ${tube.slice(-1).toUpperCase()}`,
        run: async () => {
          if (!profile) profile = await readProfile(profileFile);
          const r = await identifyFile(demo(`${tube}.jpg`), { profile, lines: loadLineList({ includeBands: true }) });
          const extraFiles: Array<{ file: string; data: string }> = [];
          const wl = r.sampleWavelengthNm;
          if (wl) {
            const rows = ['wavelength_nm,intensity,uncertainty'];
            const v = r.spectrum.variance;
            for (let i = 0; i < wl.length; i++) {
              if (!Number.isFinite(wl[i]) || !Number.isFinite(r.spectrum.intensity[i])) continue;
              rows.push(`${wl[i].toFixed(4)},${r.spectrum.intensity[i].toPrecision(6)},${v && Number.isFinite(v[i]) ? Math.sqrt(v[i]).toPrecision(3) : ''}`);
            }
            extraFiles.push({ file: `spectra/${tube}.csv`, data: rows.join('\n') + '\n' });
            const keep = Array.from(wl.keys()).filter((i) => Number.isFinite(wl[i]) && Number.isFinite(r.spectrum.intensity[i]));
            extraFiles.push({
              file: `spectra/${tube}.jdx`,
              data: spectrumToJcampDx(
                keep.map((i) => wl[i]),
                keep.map((i) => r.spectrum.intensity[i]),
                { title: `${tube} (glowprint demo)`, owner: 'glowprint demo (synthetic data)', extra: [['$GLOWPRINT SOURCE', `${tube}.jpg`]] },
              ),
            });
          }
          return { json: { command: 'identify', ...identificationJson(r) }, warnings: [], extraFiles };
        },
      }),
    ),
  ];
}
