/**
 * The polarization bench: readings behind a rotating analyser — typed (power meter), measured on the camera's view of
 * the spot on a card (one capture per analyser angle), a photo series (photometry by the server, the same as
 * `glowprint polarization photos/*.jpg`) or a table file — and the Malus fit after every reading, with DoLP, azimuth,
 * verdict, the Cartesian and polar plots, and the analyser profile (scale offset, extinction ratio).
 */
import {
  analyseRotatingAnalyser,
  calibrateAnalyser,
  malusPointsFromTable,
  measureSpotSeries,
  plotPolarization,
  type AnalyserProfile,
  type MalusPoint,
  type PolarizationResult,
} from '../../../src/core/polarization/index.js';
import { validateAnalyserProfile } from '../../../src/core/polarization/corrections.js';
import { parseNumericCsv } from '../../../src/core/table/parseNumericCsv.js';
import { linearImageFromSrgb8, rgbaToRgb } from '../decode/linearImage.js';
import { type Camera, eachVideoFrame } from '../live/camera.js';
import { exportButtons } from '../plots/exporters.js';
import { button, card, clear, field, formatPm, h, select } from '../ui/dom.js';
import { say } from '../ui/status.js';
import { tabs } from '../ui/tabs.js';
import { apiJson } from './api.js';

interface Reading {
  angleDeg: number;
  intensity: number;
  uncertainty?: number;
  excluded?: boolean;
  exclusionReason?: string;
  source: string;
}

const ANALYSER_FORMAT = 'glowprint-analyser-profile';

export function polarizationBench(camera: Camera): { root: HTMLElement } {
  let readings: Reading[] = [];
  let result: PolarizationResult | null = null;
  let analyser: (AnalyserProfile & { name?: string }) | null = null;
  let roi: { x: number; y: number; radiusPx: number } | null = null;
  const serverWarnings: string[] = [];

  // ---- readings table -------------------------------------------------------------------------------------------
  const tbody = h('tbody');
  const angleIn = h('input', { type: 'number', id: 'pol-angle', step: 'any', value: '0', 'aria-label': 'analyser angle, degrees' });
  const intensityIn = h('input', { type: 'number', id: 'pol-intensity', step: 'any', 'aria-label': 'intensity' });
  const sigmaIn = h('input', { type: 'number', id: 'pol-sigma', step: 'any', min: '0', 'aria-label': 'uncertainty of the intensity (optional)' });
  const stepIn = h('input', { type: 'number', id: 'pol-step', step: 'any', value: '15', 'aria-label': 'angle step, degrees' });
  const addTyped = (): void => {
    const a = Number(angleIn.value);
    const i = Number(intensityIn.value);
    if (angleIn.value === '' || intensityIn.value === '' || !Number.isFinite(a) || !Number.isFinite(i)) {
      say('Type the analyser angle (°) and the reading.', 'error');
      return;
    }
    const s = sigmaIn.value === '' ? undefined : Number(sigmaIn.value);
    add({ angleDeg: a, intensity: i, ...(s !== undefined && s > 0 ? { uncertainty: s } : {}), source: 'typed' });
    angleIn.value = String(a + Number(stepIn.value || 0));
    intensityIn.value = '';
    intensityIn.focus();
  };
  for (const inp of [intensityIn, sigmaIn]) inp.addEventListener('keydown', (e) => e.key === 'Enter' && addTyped());
  const typed = h(
    'div',
    { class: 'pol-typed' },
    h('p', { class: 'muted' }, 'Type each reading as you turn the analyser (a power meter, a photodiode). Enter adds the row and steps the angle.'),
    h('div', { class: 'inline' }, field('Angle (°)', angleIn), field('Reading', intensityIn), field('± (optional)', sigmaIn), field('Step (°)', stepIn), button('Add', addTyped, { id: 'pol-add', class: 'primary' })),
  );

  // ---- camera spot ----------------------------------------------------------------------------------------------
  const preview = h('canvas', { class: 'spot-preview', width: 640, height: 360, 'aria-label': 'camera view of the spot' });
  const camAngle = h('input', { type: 'number', id: 'pol-cam-angle', step: 'any', value: '0', 'aria-label': 'analyser angle of this capture, degrees' });
  const camInfo = h('p', { class: 'muted', id: 'pol-cam-info' }, 'Point the camera at the spot on a matte card, lock its exposure, and capture once per analyser angle.');
  let stopPreview: (() => void) | null = null;
  const startPreview = (): void => {
    stopPreview?.();
    if (!camera.running) return;
    stopPreview = eachVideoFrame(camera.video, () => {
      const v = camera.video;
      if (!v.videoWidth) return;
      if (preview.width !== v.videoWidth) {
        preview.width = v.videoWidth;
        preview.height = v.videoHeight;
      }
      const ctx = preview.getContext('2d')!;
      ctx.drawImage(v, 0, 0);
      if (roi) {
        ctx.strokeStyle = '#ffb84d';
        ctx.lineWidth = Math.max(2, v.videoWidth / 400);
        ctx.beginPath();
        ctx.arc(roi.x, roi.y, roi.radiusPx, 0, 2 * Math.PI);
        ctx.stroke();
      }
    });
  };
  camera.onChange(() => (camera.running ? startPreview() : stopPreview?.()));
  const captureSpot = (): void => {
    const v = camera.video;
    if (!camera.running || !v.videoWidth) {
      say('Start the camera first (Spectra bench → Camera, or the button here).', 'error');
      return;
    }
    const angle = Number(camAngle.value);
    if (!Number.isFinite(angle)) {
      say('Give the analyser angle of this capture.', 'error');
      return;
    }
    const c = new OffscreenCanvas(v.videoWidth, v.videoHeight);
    const ctx = c.getContext('2d', { willReadFrequently: true })!;
    ctx.drawImage(v, 0, 0);
    const codes = rgbaToRgb(ctx.getImageData(0, 0, c.width, c.height).data, c.width, c.height);
    try {
      const phot = measureSpotSeries([linearImageFromSrgb8(codes, c.width, c.height)], { roi: roi ?? undefined, labels: [`capture at ${angle}°`] });
      roi = { x: phot.center.x, y: phot.center.y, radiusPx: phot.apertureRadiusPx };
      const f = phot.frames[0];
      add({
        angleDeg: angle,
        intensity: f.intensity,
        uncertainty: f.uncertainty > 0 ? f.uncertainty : undefined,
        ...(f.saturated ? { excluded: true, exclusionReason: 'saturated' } : {}),
        source: `camera ${angle}°`,
      });
      camInfo.textContent = `Aperture r = ${phot.apertureRadiusPx.toFixed(1)} px at (${phot.center.x.toFixed(0)}, ${phot.center.y.toFixed(0)})${f.saturated ? ' — this frame is clipped: lower the exposure' : ''}.`;
      camAngle.value = String(angle + Number(stepIn.value || 15));
    } catch (err) {
      say((err as Error).message, 'error');
    }
  };
  const cameraTab = h(
    'div',
    { class: 'pol-camera' },
    h('div', { class: 'toolbar' }, button('Start camera', () => void camera.start().catch((e: Error) => say(`Camera: ${e.message}`, 'error')), { id: 'pol-camera-start' })),
    preview,
    camInfo,
    h('div', { class: 'inline' }, field('Analyser angle (°)', camAngle), button('Capture at this angle', captureSpot, { class: 'primary', id: 'pol-capture' }), button('Re-find the spot', () => (roi = null))),
  );

  // ---- photo series (server photometry) -------------------------------------------------------------------------
  const seriesIn = h('input', { type: 'file', id: 'pol-photos', multiple: true, accept: 'image/jpeg,image/png,image/tiff,image/webp' });
  const seriesAngles = h('input', { type: 'text', id: 'pol-photo-angles', placeholder: 'from the file names (…_045deg.jpg), or 0:15:180, or 0,15,30…' });
  const seriesGo = button('Measure the series', () => void measureSeries(), { id: 'pol-photos-go', class: 'primary' });
  const measureSeries = async (): Promise<void> => {
    const files = Array.from(seriesIn.files ?? []);
    if (files.length === 0) {
      say('Choose the photos of the series (one per analyser angle).', 'error');
      return;
    }
    const form = new FormData();
    for (const f of files) form.append('images', f, f.name);
    if (seriesAngles.value.trim()) form.append('angles', seriesAngles.value.trim());
    say(`Measuring the spot in ${files.length} photos…`, 'busy');
    try {
      const json = (await apiJson('/api/polarization', { form })) as { points: Array<Record<string, unknown>>; warnings: string[] };
      readings = json.points.map((p) => ({
        angleDeg: p.angle_deg as number,
        intensity: p.intensity as number,
        ...(typeof p.uncertainty === 'number' ? { uncertainty: p.uncertainty } : {}),
        ...(p.excluded ? { excluded: true, exclusionReason: String(p.exclusion_reason ?? 'excluded') } : {}),
        source: String(p.file ?? p.line ?? ''),
      }));
      serverWarnings.splice(0, serverWarnings.length, ...json.warnings);
      refresh();
      say(`${files.length} photos measured.`, 'ok');
    } catch (err) {
      say((err as Error).message, 'error');
    }
  };
  const seriesTab = h(
    'div',
    {},
    h('p', { class: 'muted' }, 'Photos of the spot, one per analyser angle, exposure locked. Clipped frames are left out and named.'),
    field('Photos', seriesIn),
    field('Angles', seriesAngles),
    seriesGo,
  );

  // ---- table file -----------------------------------------------------------------------------------------------
  const tableIn = h('input', { type: 'file', id: 'pol-table', accept: '.csv,.tsv,.txt,text/csv,text/plain' });
  tableIn.addEventListener('change', async () => {
    const f = tableIn.files?.[0];
    tableIn.value = '';
    if (!f) return;
    try {
      const pts = malusPointsFromTable(parseNumericCsv(await f.text(), { source: f.name, minColumns: 2 }), f.name);
      readings = pts.map((p) => ({ ...p, source: `${f.name} ${p.source ?? ''}`.trim() }));
      serverWarnings.length = 0;
      refresh();
      say(`${f.name}: ${pts.length} readings.`, 'ok');
    } catch (err) {
      say((err as Error).message, 'error');
    }
  });
  const tableTab = h('div', {}, h('p', { class: 'muted' }, 'A CSV of angle_deg, intensity[, uncertainty] (any delimiter; a header is matched by name).'), field('Table', tableIn));

  const inputTabs = tabs(
    [
      { id: 'pol-in-typed', label: 'Type readings', panel: typed },
      { id: 'pol-in-camera', label: 'Camera spot', panel: cameraTab },
      { id: 'pol-in-photos', label: 'Photo series', panel: seriesTab },
      { id: 'pol-in-table', label: 'Table file', panel: tableTab },
    ],
    { label: 'Where the readings come from', onChange: (id) => (id === 'pol-in-camera' ? startPreview() : stopPreview?.()) },
  );

  // ---- analyser -------------------------------------------------------------------------------------------------
  const erIn = h('input', { type: 'number', id: 'pol-er', min: '1', step: 'any', placeholder: 'e.g. 300', 'aria-label': 'extinction ratio' });
  erIn.addEventListener('change', () => refresh());
  const analyserSel = select([{ value: '', label: 'none' }], { id: 'pol-analyser', 'aria-label': 'analyser profile' });
  const analyserInfo = h('p', { class: 'muted', id: 'pol-analyser-info' }, 'No analyser profile: azimuths are scale readings.');
  const refAz = h('input', { type: 'number', id: 'pol-ref-az', step: 'any', value: '0', 'aria-label': 'true azimuth of the reference, degrees' });
  const profName = h('input', { type: 'text', id: 'pol-profile-name', placeholder: 'analyser-a', 'aria-label': 'name for the analyser profile' });
  const loadAnalysers = async (): Promise<void> => {
    try {
      const { profiles } = (await apiJson('/api/profiles')) as { profiles: string[] };
      const found: string[] = [];
      for (const name of profiles) {
        const p = (await apiJson(`/api/profiles/${encodeURIComponent(name)}`)) as { format?: string };
        if (p?.format === ANALYSER_FORMAT) found.push(name);
      }
      analyserSel.replaceChildren(h('option', { value: '' }, 'none'), ...found.map((n) => h('option', { value: n }, n)));
    } catch {
      /* the workspace is optional here */
    }
  };
  analyserSel.addEventListener('change', async () => {
    const name = analyserSel.value;
    if (!name) {
      analyser = null;
      analyserInfo.textContent = 'No analyser profile: azimuths are scale readings.';
      refresh();
      return;
    }
    try {
      const j = (await apiJson(`/api/profiles/${encodeURIComponent(name)}`)) as Record<string, number>;
      analyser = {
        ...validateAnalyserProfile(
          {
            offsetDeg: j.offset_deg,
            offsetUncertaintyDeg: j.offset_uncertainty_deg,
            ...(j.extinction_ratio !== undefined ? { extinctionRatio: j.extinction_ratio } : {}),
          },
          `profile ${name}`,
        ),
        name,
      };
      analyserInfo.textContent = `Analyser ${name}: offset ${formatPm(analyser.offsetDeg, analyser.offsetUncertaintyDeg)}°${analyser.extinctionRatio ? `, extinction ratio ${analyser.extinctionRatio}:1` : ''}.`;
      refresh();
    } catch (err) {
      say((err as Error).message, 'error');
    }
  });
  const calibrate = async (): Promise<void> => {
    const name = profName.value.trim();
    if (!name) {
      say('Name the analyser profile.', 'error');
      return;
    }
    try {
      const er = erIn.value ? Number(erIn.value) : undefined;
      const cal = calibrateAnalyser(points(), { referenceAzimuthDeg: Number(refAz.value || 0), extinctionRatio: er });
      const json = {
        format: ANALYSER_FORMAT,
        version: 1,
        name,
        offset_deg: cal.profile.offsetDeg,
        offset_uncertainty_deg: cal.profile.offsetUncertaintyDeg,
        ...(cal.profile.extinctionRatio !== undefined ? { extinction_ratio: cal.profile.extinctionRatio } : {}),
        calibration: {
          reference_azimuth_deg: Number(refAz.value || 0),
          measured_azimuth_deg: cal.fit.azimuthDeg,
          measured_azimuth_uncertainty_deg: cal.fit.azimuthUncertaintyDeg,
          reference_dolp: cal.fit.dolp,
          created: new Date().toISOString(),
        },
      };
      await apiJson(`/api/profiles/${encodeURIComponent(name)}`, { method: 'PUT', body: json });
      say(`Analyser ${name} saved: offset ${formatPm(cal.profile.offsetDeg, cal.profile.offsetUncertaintyDeg)}°.`, 'ok');
      await loadAnalysers();
    } catch (err) {
      say((err as Error).message, 'error');
    }
  };
  const analyserGroup = h(
    'fieldset',
    { class: 'group' },
    h('legend', {}, 'Analyser'),
    h('div', { class: 'inline' }, field('Profile', analyserSel), button('↻', () => void loadAnalysers(), { 'aria-label': 'Refresh the analyser profiles' }), field('Extinction ratio', erIn)),
    analyserInfo,
    h('details', {}, h('summary', {}, 'Calibrate the analyser from these readings'), h('p', { class: 'muted' }, 'Readings taken on a reference of known azimuth, e.g. floor glare near Brewster\'s angle (mostly horizontal, 0°).'), h('div', { class: 'inline' }, field('Reference azimuth (°)', refAz), field('Save as', profName), button('Calibrate and save', () => void calibrate(), { id: 'pol-calibrate' }))),
  );

  // ---- readings list + result -----------------------------------------------------------------------------------
  const add = (r: Reading): void => {
    readings.push(r);
    serverWarnings.length = 0;
    refresh();
  };
  const points = (): MalusPoint[] =>
    readings.map((r) => ({ angleDeg: r.angleDeg, intensity: r.intensity, uncertainty: r.uncertainty, excluded: r.excluded, exclusionReason: r.exclusionReason, source: r.source }));
  const readingsCard = card('Readings', { id: 'pol-readings', tools: [button('Clear', () => ((readings = []), (roi = null), refresh()), { id: 'pol-clear' })] });
  readingsCard.body.append(
    inputTabs.root,
    analyserGroup,
    h(
      'div',
      { class: 'table-scroll short' },
      h('table', { class: 'table', id: 'pol-table-readings' }, h('thead', {}, h('tr', {}, ...['angle °', 'reading', '±', 'fit', 'residual', 'source', ''].map((t) => h('th', { scope: 'col' }, t)))), tbody),
    ),
  );

  const verdict = h('div', { class: 'verdict-box', id: 'pol-verdict' }, h('p', { class: 'muted' }, 'Three analyser angles at least (mod 180°) give a fit; 0° to 180° in 15° steps is the usual series.'));
  const figure = h('div', { class: 'sheet', id: 'pol-figure' });
  const resultCard = card('Malus fit', {
    id: 'pol-result',
    tools: [
      exportButtons({
        baseName: () => 'polarization',
        svg: () => figure.querySelector('svg'),
        csv: () => (result ? ['angle_deg,intensity,uncertainty,model,residual,excluded', ...result.points.map((p) => [p.angleDeg, p.intensity, p.uncertainty ?? '', p.model, p.residual, p.excluded ? 1 : 0].join(','))].join('\n') + '\n' : null),
        json: () => (result ? { ...result, malus: undefined } : null),
      }),
    ],
  });
  resultCard.body.append(verdict, figure);

  function refresh(): void {
    clear(tbody);
    result = null;
    let error: string | null = null;
    if (readings.length > 0) {
      try {
        const er = erIn.value ? Number(erIn.value) : undefined;
        result = analyseRotatingAnalyser(points(), { profile: analyser ?? undefined, extinctionRatio: er && er > 1 ? er : undefined, fit: { source: 'readings' } });
      } catch (err) {
        error = (err as Error).message;
      }
    }
    readings.forEach((r, i) => {
      const p = result?.points[i];
      tbody.append(
        h(
          'tr',
          { class: r.excluded ? 'unused' : '' },
          h('td', { class: 'num' }, r.angleDeg.toFixed(1)),
          h('td', { class: 'num' }, r.intensity.toPrecision(5)),
          h('td', { class: 'num' }, r.uncertainty !== undefined ? r.uncertainty.toPrecision(2) : ''),
          h('td', { class: 'num' }, p ? p.model.toPrecision(5) : ''),
          h('td', { class: 'num' }, p ? p.residual.toPrecision(3) : ''),
          h('td', {}, `${r.source}${r.excluded ? ` (left out: ${r.exclusionReason})` : ''}`),
          h('td', {}, button('×', () => ((readings = readings.filter((q) => q !== r)), refresh()), { class: 'small', 'aria-label': `remove the reading at ${r.angleDeg}°` })),
        ),
      );
    });
    clear(verdict);
    clear(figure);
    if (!result) {
      verdict.append(h('p', { class: error ? 'warning' : 'muted' }, error ?? 'Three analyser angles at least (mod 180°) give a fit; 0° to 180° in 15° steps is the usual series.'));
      return;
    }
    const r = result;
    verdict.dataset.verdict = r.verdict;
    verdict.append(
      h('p', { class: `verdict ${r.verdict}`, id: 'pol-verdict-text' }, h('strong', {}, r.verdict.replace('_', ' ')), ' — ', r.verdictReason),
      h(
        'dl',
        { class: 'figures' },
        h('dt', {}, 'DoLP'),
        h('dd', { id: 'pol-dolp' }, formatPm(r.dolp, r.dolpUncertainty, 3)),
        h('dt', {}, 'Azimuth'),
        h('dd', { id: 'pol-azimuth' }, `${formatPm(r.azimuthDeg, r.azimuthUncertaintyDeg, 1)}° ${r.corrections.analyserOffsetDeg !== null ? '(true, offset applied)' : '(on the analyser scale)'}`),
        h('dt', {}, 'I max / I min'),
        h('dd', {}, `${r.iMax.toPrecision(4)} / ${r.iMin.toPrecision(3)}`),
        h('dt', {}, 'Fit'),
        h('dd', {}, r.fit.chi2PValue !== null ? `χ²/dof ${r.fit.reducedChi2.toFixed(2)} (${r.fit.dof} dof)` : `rms ${r.fit.rms.toPrecision(3)} (${r.fit.dof} dof)`),
      ),
      ...[...new Set([...serverWarnings, ...r.warnings])].slice(0, 5).map((w) => h('p', { class: 'warning' }, w)),
    );
    if (r.malus) {
      const svg = plotPolarization({ document, fit: r.malus, correctedAzimuthDeg: r.corrections.analyserOffsetDeg !== null ? r.azimuthDeg : undefined });
      svg.setAttribute('role', 'img');
      svg.setAttribute('aria-label', `Malus fit and polar plot: DoLP ${r.dolp.toFixed(3)}, azimuth ${r.azimuthDeg.toFixed(1)} degrees`);
      figure.append(svg);
    }
  }

  void loadAnalysers();
  const root = h('div', { class: 'bench polarization-bench' }, readingsCard.root, resultCard.root);
  return { root };
}
