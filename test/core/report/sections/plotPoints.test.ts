import { describe, expect, it } from 'vitest';
import { calibrationSection } from '../../../../src/core/report/sections/calibrationSection.js';
import { boxesOverlap, segmentHitsBox, textWidthPx } from '../../../../src/core/plot/labelLayout.js';
import { type PlotPoint, plotPoints } from '../../../../src/core/report/sections/plotPoints.js';
import { createSvgDocument } from '../../../../src/io/svgDocument.js';
import { parseSvg } from './results.js';

const document = createSvgDocument();

interface Box {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

/**
 * The test's own estimate of a label's box: font size × character count × 0.6 em (common practice, no source; headless
 * Chromium on Debian, DejaVu Sans for `system-ui`, measured '0.834' at 10 px 28.6 px wide, i.e. 0.57 em a
 * character), from 0.8 em above the baseline to 0.2 em below.
 */
function estimatedBox(t: Element): Box {
  const fontPx = Number(t.getAttribute('font-size') ?? 11);
  const x = Number(t.getAttribute('x'));
  const baseline = Number(t.getAttribute('y'));
  const w = 0.6 * fontPx * (t.textContent ?? '').length;
  const anchor = t.getAttribute('text-anchor') ?? 'start';
  const x0 = anchor === 'end' ? x - w : anchor === 'middle' ? x - w / 2 : x;
  return { x0, y0: baseline - 0.8 * fontPx, x1: x0 + w, y1: baseline + 0.2 * fontPx };
}

const intersects = (a: Box, b: Box): boolean => a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1;
const distance = (a: Box, b: Box): number => Math.hypot(Math.max(0, a.x0 - b.x1, b.x0 - a.x1), Math.max(0, a.y0 - b.y1, b.y0 - a.y1));

/** The plotting area's size, from the x axis: its translate gives the height, its domain path the width. */
function plotArea(svg: Document): Box {
  const h = Number(/translate\(0,([\d.]+)\)/.exec(svg.querySelector('g.axis-x')!.getAttribute('transform')!)![1]);
  const w = Number(/H([\d.]+)/.exec(svg.querySelector('g.axis-x path.domain')!.getAttribute('d')!)![1]) - 0.5;
  return { x0: 0, y0: 0, x1: w, y1: h };
}

/** Markers as boxes: circles, crosses and the off-scale triangles (with where each triangle's tip is). */
function markers(svg: Document): { circles: Box[]; triangles: Array<Box & { cx: number; tipY: number }> } {
  const circles = [...svg.querySelectorAll('g.points circle')].map((c) => {
    const cx = Number(c.getAttribute('cx'));
    const cy = Number(c.getAttribute('cy'));
    const r = Number(c.getAttribute('r'));
    return { x0: cx - r, y0: cy - r, x1: cx + r, y1: cy + r };
  });
  const triangles = [...svg.querySelectorAll('g.points path.offscale')].map((p) => {
    const [, cx, y, dy] = /^M([-\d.]+),([-\d.]+)l-5,(-?8)/.exec(p.getAttribute('d')!)!.map(Number);
    return { x0: cx - 5, x1: cx + 5, y0: Math.min(y, y + dy), y1: Math.max(y, y + dy), cx, tipY: y + dy };
  });
  return { circles, triangles };
}

/** Every label is clear of every other, of every marker, and inside the plotting area (not on the axes). */
function expectLabelsClear(svgText: string): void {
  const svg = parseSvg(svgText);
  const labels = [...svg.querySelectorAll('g.points text')];
  const boxes = labels.map(estimatedBox);
  const area = plotArea(svg);
  const { circles, triangles } = markers(svg);
  const levelLabels = [...svg.querySelectorAll('svg > g > text')].filter((t) => /RMS|^[+−-]?\d/.test(t.textContent ?? '')).map(estimatedBox);
  boxes.forEach((b, i) => {
    const name = `label "${labels[i].textContent}"`;
    expect(b.x0 >= area.x0 && b.x1 <= area.x1 && b.y0 >= area.y0 && b.y1 <= area.y1, `${name} inside the plot`).toBe(true);
    for (let j = i + 1; j < boxes.length; j++) expect(intersects(b, boxes[j]), `${name} clear of "${labels[j].textContent}"`).toBe(false);
    for (const m of [...circles, ...triangles]) expect(intersects(b, m), `${name} clear of the marker at x = ${(m.x0 + m.x1) / 2}`).toBe(false);
    for (const l of levelLabels) expect(intersects(b, l), `${name} clear of a level label`).toBe(false);
  });
}

/**
 * Each off-scale value is written next to its own triangle: within a few pixels of it, or hung on a leader line that
 * starts at that triangle's tip and ends at the label.
 */
function expectValuesBesideTheirMarkers(svgText: string, valueAtX: (cx: number) => string): void {
  const svg = parseSvg(svgText);
  const labels = [...svg.querySelectorAll('g.points text')];
  const leaders = [...svg.querySelectorAll('g.points line.leader')].map((l) => ['x1', 'y1', 'x2', 'y2'].map((k) => Number(l.getAttribute(k))));
  for (const t of markers(svg).triangles) {
    const text = valueAtX(t.cx);
    const label = labels.find((l) => l.textContent === text);
    expect(label, `a label ${text}`).toBeDefined();
    const box = estimatedBox(label!);
    const near = distance(box, t) <= 10;
    const hung = leaders.some(([x1, y1, x2, y2]) => Math.hypot(x1 - t.cx, y1 - t.tipY) < 2 && distance(box, { x0: x2, y0: y2, x1: x2, y1: y2 }) < 4);
    expect(near || hung, `${text} next to its triangle at x = ${t.cx.toFixed(1)}`).toBe(true);
  }
}

/**
 * A fluorescent-lamp calibration whose phosphor band near 541–546 nm gave five lines far off the scale (three above,
 * two below), beside an in-scale Hg I line. Wavelengths: Hg I from memory of the NIST ASD; the phosphor lines,
 * positions and residuals invented for the layout.
 */
function crowded(): Record<string, unknown> {
  const lines = [
    [56.2, 404.656, 0.004, true],
    [104.1, 435.833, -0.006, true],
    [273.3, 541.0, 0.834, false],
    [275.5, 542.4, 0.141, false],
    [277.4, 543.6, 0.507, false],
    [279.0, 544.6, -0.136, false],
    [280.3, 545.4, -0.419, false],
    [281.3, 546.074, 0.005, true],
    [330.0, 576.96, -0.008, true],
    [333.4, 579.066, 0.006, true],
  ].map(([position_px, wavelength_nm, residual_nm, used]) => ({
    position_px,
    position_uncertainty_px: 0.05,
    wavelength_nm,
    residual_nm,
    used,
    ...(used ? {} : { excluded: 'imprecise' }),
  }));
  return { rms_nm: 0.006, dispersion_nm_per_px: 0.626, range_nm: [404.656, 579.066], model: { kind: 'grating' }, lines_per_mm: 999.2, lines, warnings: [] };
}

describe('plotPoints: labels laid out clear of each other', () => {
  it('off-scale residuals close in wavelength: their values stay apart, off the markers and axes, each by its own triangle', () => {
    const json = crowded();
    const svg = calibrationSection(json, { document }).section.svgs![0];
    const doc = parseSvg(svg);
    expect(doc.querySelectorAll('path.offscale').length).toBe(5);
    expectLabelsClear(svg);
    // Triangles in wavelength order are the off-scale lines in wavelength order.
    const off = (json.lines as Array<{ residual_nm: number; used: boolean }>).filter((l) => !l.used).map((l) => String(l.residual_nm));
    const xs = markers(doc).triangles.map((t) => t.cx).sort((a, b) => a - b);
    expectValuesBesideTheirMarkers(svg, (cx) => off[xs.indexOf(cx)]);
  });

  it('the values of off-scale points facing each other across the middle do not collide (the demo’s 0.834 and 0.141)', () => {
    // As in the demo report: one value on the left half written rightwards, one on the right half leftwards.
    const points = [
      { x: 404.7, y: -0.006, uncertainty: 0.08 },
      { x: 545.4, y: 0.834, excluded: true },
      { x: 567.6, y: 0.005, uncertainty: 0.03 },
      { x: 576.96, y: 0.141, excluded: true },
      { x: 579.07, y: -0.136, excluded: true },
      { x: 690.7, y: 0.017, uncertainty: 0.03 },
    ];
    const svg = plotPoints({ document, points, yRange: 'included', xLabel: 'nm', yLabel: 'nm', levels: [{ y: 0 }, { y: 0.012, label: '+RMS' }, { y: -0.012, label: '−RMS' }] });
    expectLabelsClear(svg);
    const byX = new Map(points.filter((p) => p.excluded).map((p) => [p.x, String(p.y)]));
    const xs = [...byX.keys()];
    const tri = markers(parseSvg(svg)).triangles.map((t) => t.cx).sort((a, b) => a - b);
    expectValuesBesideTheirMarkers(svg, (cx) => byX.get(xs[tri.indexOf(cx)])!);
  });

  it('a single off-scale value keeps its place beside its triangle, with no leader', () => {
    const svg = plotPoints({ document, points: [{ x: 1, y: 0 }, { x: 2, y: 0.01 }, { x: 3, y: 5, excluded: true }, { x: 4, y: -0.01 }], yRange: 'included', xLabel: 'x', yLabel: 'y' });
    const doc = parseSvg(svg);
    const [t] = markers(doc).triangles;
    const label = doc.querySelector('g.points text')!;
    expect(label.textContent).toBe('5');
    // Right half: to the left of the triangle, 8 px off, level with it.
    expect(label.getAttribute('text-anchor')).toBe('end');
    expect(Number(label.getAttribute('x'))).toBeCloseTo(t.cx - 8, 6);
    expect(doc.querySelectorAll('line.leader').length).toBe(0);
  });

  it('a dozen off-scale points within a few pixels: every value still written, none on another', () => {
    const points: PlotPoint[] = [
      ...Array.from({ length: 12 }, (_, i) => ({ x: 500 + i * 0.8, y: (i % 2 ? -1 : 1) * (1 + i / 10), excluded: true })),
      { x: 400, y: 0.01 },
      { x: 600, y: -0.01 },
      { x: 700, y: 0 },
    ];
    const svg = plotPoints({ document, points, yRange: 'included', xLabel: 'x', yLabel: 'y' });
    const texts = [...parseSvg(svg).querySelectorAll('g.points text')].map((t) => t.textContent);
    expect(texts.sort()).toEqual(points.filter((p) => p.excluded).map((p) => String(Number(p.y.toPrecision(3)))).sort());
    expectLabelsClear(svg);
  });

  it('in-scale point labels that would collide move apart (the drift plot, the orders of a grating)', () => {
    const points = [0, 1, 2, 3, 4].map((i) => ({ x: 10 + i * 0.3, y: 1 + i * 0.002, uncertainty: 0.001, label: `trace-${i + 1}.csv` }));
    points.push({ x: 30, y: 2, uncertainty: 0.01, label: 'trace-6.csv' });
    const svg = plotPoints({ document, points, xLabel: 'time (s)', yLabel: 'MHz' });
    expect(parseSvg(svg).querySelectorAll('g.points text').length).toBe(6);
    expectLabelsClear(svg);
    // Labels with room keep their place: above and to the right of the point (left half), 6 px off.
    const grating = plotPoints({ document, points: [-2, -1, 1, 2].map((m) => ({ x: m, y: m / 4, uncertainty: 1, label: `m = ${m}` })), xIntegerTicks: true, xLabel: 'm', yLabel: 'r' });
    const doc = parseSvg(grating);
    const c = doc.querySelector('g.points circle')!;
    const t = doc.querySelector('g.points text')!;
    expect(t.textContent).toBe('m = -2');
    expect(Number(t.getAttribute('x'))).toBeCloseTo(Number(c.getAttribute('cx')) + 6, 6);
    expect(Number(t.getAttribute('y'))).toBeCloseTo(Number(c.getAttribute('cy')) - 6, 6);
    expectLabelsClear(grating);
  });
});

describe('labelLayout helpers', () => {
  it('estimates text no narrower than measured in Chromium with DejaVu Sans at 10 px', () => {
    // Measured here with getBBox() in headless Chromium (Debian, DejaVu Sans for system-ui).
    for (const [text, measuredPx] of [['0.834', 28.6], ['-0.136', 32.3], ['−0.419', 37.0], ['warmup-1.csv', 70.5], ['m = -3', 34.5], ['+RMS', 30.3]] as const) {
      expect(textWidthPx(text, 10), text).toBeGreaterThanOrEqual(measuredPx);
      expect(textWidthPx(text, 10), text).toBeLessThan(measuredPx * 1.3);
    }
  });

  it('boxes and segments: overlap and crossing', () => {
    const b = { x0: 0, y0: 0, x1: 10, y1: 10 };
    expect(boxesOverlap(b, { x0: 9, y0: 9, x1: 20, y1: 20 })).toBe(true);
    expect(boxesOverlap(b, { x0: 11, y0: 0, x1: 20, y1: 10 })).toBe(false);
    expect(boxesOverlap(b, { x0: 11, y0: 0, x1: 20, y1: 10 }, 1.5)).toBe(true);
    expect(segmentHitsBox({ x1: -5, y1: 5, x2: 15, y2: 5 }, b)).toBe(true);
    expect(segmentHitsBox({ x1: -5, y1: -5, x2: -1, y2: 20 }, b)).toBe(false);
    expect(segmentHitsBox({ x1: 5, y1: 20, x2: 5, y2: 12 }, b)).toBe(false);
    expect(segmentHitsBox({ x1: 12, y1: -2, x2: -2, y2: 12 }, b)).toBe(true);
  });
});
