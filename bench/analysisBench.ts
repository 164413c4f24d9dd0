import { applyProfileToPeaks, CALIBRATE_MATCH_DEFAULTS, calibrationLampLines, matchLines } from '../src/core/calibration/index.js';
import type { CalibratedPeak } from '../src/core/identify/identifySpecies.js';
import { dispersionPriorNmPerPx } from '../src/core/identify/dispersionPrior.js';
import { identifySpectrum } from '../src/core/identify/identifySpectrum.js';
import { findPeaks } from '../src/core/spectrum/peaks/index.js';
import type { Peak, SpectralLine } from '../src/core/types.js';
import { loadLampCatalog, loadLaserDefinitions, loadLineList } from '../src/io/lineList.js';
import { dataPath } from '../src/io/projectRoot.js';
import { readProfile } from '../src/io/profileFile.js';
import { runCalibrate } from '../src/tasks/calibrate.js';
import { analyseSpectrumInput } from '../src/tasks/spectrum.js';
import { type BenchFigure, type BenchSection, median } from './section.js';
import path from 'node:path';

const WARM_UP_RUNS = 5;

/**
 * Median wall time of `runs` calls after WARM_UP_RUNS untimed ones. One warm-up left the JIT mid-way on the matcher
 * (tens of ms per call, tiered up over the first calls): the median of 9 then scattered over 27–94 ms between runs
 * of the same build on an idle machine.
 */
function timeMs(fn: () => unknown, runs: number): number {
  const times: number[] = [];
  for (let i = 0; i < WARM_UP_RUNS; i++) fn();
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    fn();
    times.push(performance.now() - t0);
  }
  return median(times);
}

/**
 * Automatic line matching (calibration) and identification on the demo rig, each against the peak search of the same
 * spectrum as the floor measured in this run (the step every analysis starts from).
 */
export const analysisSection: BenchSection = {
  name: 'calibration matching and identification',
  async run({ workDir, log }) {
    log('  calibrating the demo rig and extracting demo tube B (not timed)…');
    const profileFile = path.join(workDir, 'rig.json');
    await runCalibrate(dataPath('demo', 'cfl-calibration.jpg'), { lamp: 'fluorescent', model: 'auto', direction: 'either', out: profileFile });
    const profile = await readProfile(profileFile);
    const { analysis, spectrum } = await analyseSpectrumInput(dataPath('demo', 'tube-b.jpg'));
    const floorMs = timeMs(() => findPeaks(spectrum), 15);

    // Matching as glowprint calibrate runs it (every listed line, CALIBRATE_MATCH_DEFAULTS): 40 peaks from a 0.5 nm/px
    // scale over 200 lamp lines (Ne, Ar, Hg, Kr), with 6 stray peaks.
    const lines = calibrationLampLines('Ne,Ar,Hg,Kr', loadLampCatalog()).lines.filter((l) => l.wavelengthNm > 380 && l.wavelengthNm < 900).slice(0, 200) as SpectralLine[];
    const step = Math.max(1, Math.floor(lines.length / 34));
    const peaks: Peak[] = [];
    for (let i = 0; i < lines.length && peaks.length < 34; i += step) {
      const x = (lines[i].wavelengthNm - 380) / 0.5;
      peaks.push({ positionPx: x, positionUncertaintyPx: 0.1, fwhmPx: 3, height: lines[i].intensity, area: lines[i].intensity, prominence: 1, snr: 100, saturated: false, blended: false });
    }
    for (let k = 0; k < 6; k++) peaks.push({ positionPx: 37 + k * 131.7, positionUncertaintyPx: 0.1, fwhmPx: 3, height: 50, area: 50, prominence: 1, snr: 40, saturated: false, blended: false });
    const matchMs = timeMs(() => matchLines(peaks, lines, CALIBRATE_MATCH_DEFAULTS), 25);

    const all = loadLineList();
    const lasers = loadLaserDefinitions();
    const applied = applyProfileToPeaks(analysis.peaks, profile, {
      image: { widthPx: analysis.input.widthPx!, heightPx: analysis.input.heightPx! },
      band: analysis.band,
      source: 'tube-b.jpg',
    });
    const calibrated = applied.peaks.filter((p) => Number.isFinite(p.wavelengthNm)) as CalibratedPeak[];
    const withProfileMs = timeMs(() => identifySpectrum({ from: 'profile', peaks: calibrated, rmsNm: profile.rmsNm }, { lines: all, lasers }), 15);
    // As identifyFile runs it: the photo's dispersion prior (EXIF 35-mm focal length and image size) goes along.
    const dispersionNmPerPx = dispersionPriorNmPerPx({
      image: { widthPx: analysis.input.widthPx!, heightPx: analysis.input.heightPx! },
      focalLength35mmMm: analysis.input.exif?.focalLength35mmMm,
    });
    const selfMs = timeMs(() => identifySpectrum({ from: 'self', peaks: analysis.peaks, dispersionNmPerPx }, { lines: all, lasers }), 7);
    // Tube B's argon match is decisive and ends the search early; demo tube D (a leaky hydrogen tube: H, N, N2, O)
    // gives no lamp a decisive match, so every lamp is matched and every brightest-line scale sought.
    const tubeD = (await analyseSpectrumInput(dataPath('demo', 'tube-d.jpg'))).analysis;
    const priorD = dispersionPriorNmPerPx({
      image: { widthPx: tubeD.input.widthPx!, heightPx: tubeD.input.heightPx! },
      focalLength35mmMm: tubeD.input.exif?.focalLength35mmMm,
    });
    const selfFullMs = timeMs(() => identifySpectrum({ from: 'self', peaks: tubeD.peaks, dispersionNmPerPx: priorD }, { lines: all, lasers }), 5);
    const detail = (ms: number): string => `median ${ms.toFixed(1)} ms = ${(ms / floorMs).toFixed(1)}× the peak search of the same spectrum (${floorMs.toFixed(2)} ms, ${analysis.peaks.length} peaks)`;
    const figures: BenchFigure[] = [
      { name: `automatic matching, ${peaks.length} peaks × ${lines.length} lines`, value: matchMs, unit: ' ms', target: 50, kind: 'max', detail: detail(matchMs) },
      { name: 'identification with a profile, per spectrum', value: withProfileMs, unit: ' ms', target: 20, kind: 'max', detail: detail(withProfileMs) },
      { name: 'identification, self-calibrating, per spectrum', value: selfMs, unit: ' ms', target: 300, kind: 'max', detail: detail(selfMs) },
      {
        name: `identification, self-calibrating, no decisive lamp (tube D, ${tubeD.peaks.length} peaks)`,
        value: selfFullMs,
        unit: ' ms',
        target: 300,
        kind: 'max',
        detail: detail(selfFullMs),
      },
    ];
    return figures;
  },
};
