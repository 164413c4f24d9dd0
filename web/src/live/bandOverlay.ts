/**
 * The band drawn over the camera view or a photo, editable: drag inside it to move it, drag an end dot to change its
 * length and angle, drag the edge tab to change its height; or focus it and use the keys (arrows move, [ ] turn,
 * , . shorten/lengthen, - + lower/raise the height; Shift for bigger steps). Coordinates are those of the frame.
 */
import type { BandGeometry, PointPx } from '../../../src/core/types.js';
import { bandPointPx } from '../../../src/core/spectrum/band/frame.js';
import { bandOutline, dragBandEdge, dragBandEnd, moveBand, resizeBand, rotateBand } from './bandGeometry.js';
import { liveHalfWidthPx, objectHalfWidthPx } from './liveSpectrum.js';

const NS = 'http://www.w3.org/2000/svg';

type Drag = { kind: 'move'; from: PointPx; band: BandGeometry } | { kind: 'start' | 'end' | 'edge' };

export class BandOverlay {
  readonly svg: SVGSVGElement;
  private band: BandGeometry | null = null;
  private frame = { width: 1280, height: 720 };
  private drag: Drag | null = null;
  private outer: SVGPolygonElement;
  private object: SVGPolygonElement;
  private axis: SVGLineElement;
  private arrow: SVGPathElement;
  private startDot: SVGCircleElement;
  private endDot: SVGCircleElement;
  private edgeTab: SVGRectElement;
  private group: SVGGElement;

  constructor(private onEdit: (band: BandGeometry, done: boolean) => void) {
    this.svg = document.createElementNS(NS, 'svg');
    this.svg.setAttribute('class', 'band-overlay');
    this.svg.setAttribute('preserveAspectRatio', 'xMidYMid meet');
    this.group = el('g', {
      tabindex: '0',
      role: 'group',
      'aria-label': 'Band outline. Arrow keys move it, [ and ] turn it, comma and full stop change its length, minus and plus its height; hold Shift for bigger steps.',
      class: 'band-group',
    });
    this.outer = el('polygon', { class: 'band-bg', fill: 'none' });
    this.object = el('polygon', { class: 'band-object' });
    this.axis = el('line', { class: 'band-axis' });
    this.arrow = el('path', { class: 'band-arrow' });
    this.startDot = el('circle', { class: 'band-handle', 'data-handle': 'start' });
    this.endDot = el('circle', { class: 'band-handle', 'data-handle': 'end' });
    this.edgeTab = el('rect', { class: 'band-handle', 'data-handle': 'edge' });
    this.group.append(this.outer, this.object, this.axis, this.arrow, this.startDot, this.endDot, this.edgeTab);
    this.svg.append(this.group);
    this.svg.addEventListener('pointerdown', (e) => this.pointerDown(e));
    this.svg.addEventListener('pointermove', (e) => this.pointerMove(e));
    this.svg.addEventListener('pointerup', (e) => this.pointerUp(e));
    this.svg.addEventListener('pointercancel', (e) => this.pointerUp(e));
    this.group.addEventListener('keydown', (e) => this.key(e));
  }

  setFrame(width: number, height: number): void {
    this.frame = { width, height };
    this.svg.setAttribute('viewBox', `0 0 ${width} ${height}`);
    this.draw();
  }

  setBand(band: BandGeometry | null): void {
    this.band = band;
    this.draw();
  }

  get current(): BandGeometry | null {
    return this.band;
  }

  private draw(): void {
    const b = this.band;
    this.group.style.display = b ? '' : 'none';
    if (!b) return;
    const scale = Math.max(this.frame.width, this.frame.height) / 1280;
    const pts = (p: PointPx[]): string => p.map((q) => `${q.x.toFixed(1)},${q.y.toFixed(1)}`).join(' ');
    this.outer.setAttribute('points', pts(bandOutline(b, liveHalfWidthPx(b))));
    this.object.setAttribute('points', pts(bandOutline(b, objectHalfWidthPx(b))));
    const s = bandPointPx(b, 0, 0);
    const e = bandPointPx(b, b.lengthPx, 0);
    setAttrs(this.axis, { x1: s.x, y1: s.y, x2: e.x, y2: e.y, 'stroke-width': 1.5 * scale });
    // Arrowhead at the end: positions grow this way.
    const a = Math.atan2(e.y - s.y, e.x - s.x);
    const len = 14 * scale;
    const tip = e;
    const l = { x: tip.x - len * Math.cos(a - 0.4), y: tip.y - len * Math.sin(a - 0.4) };
    const r = { x: tip.x - len * Math.cos(a + 0.4), y: tip.y - len * Math.sin(a + 0.4) };
    this.arrow.setAttribute('d', `M${l.x},${l.y}L${tip.x},${tip.y}L${r.x},${r.y}`);
    this.arrow.setAttribute('stroke-width', String(2 * scale));
    setAttrs(this.startDot, { cx: s.x, cy: s.y, r: 9 * scale });
    setAttrs(this.endDot, { cx: e.x, cy: e.y, r: 9 * scale });
    const edge = bandPointPx(b, b.lengthPx / 2, -b.heightPx / 2);
    const t = 14 * scale;
    setAttrs(this.edgeTab, { x: edge.x - t / 2, y: edge.y - t / 2, width: t, height: t });
    this.object.setAttribute('stroke-width', String(1.5 * scale));
    this.outer.setAttribute('stroke-width', String(1 * scale));
    this.outer.setAttribute('stroke-dasharray', `${6 * scale} ${4 * scale}`);
  }

  private toFrame(e: PointerEvent): PointPx {
    const m = this.svg.getScreenCTM();
    if (!m) return { x: 0, y: 0 };
    const p = new DOMPoint(e.clientX, e.clientY).matrixTransform(m.inverse());
    return { x: p.x, y: p.y };
  }

  private pointerDown(e: PointerEvent): void {
    if (!this.band) return;
    const target = e.target as Element;
    const handle = target.getAttribute('data-handle');
    if (handle === 'start' || handle === 'end' || handle === 'edge') this.drag = { kind: handle };
    else if (target === this.object || target === this.outer || target === this.axis) this.drag = { kind: 'move', from: this.toFrame(e), band: this.band };
    else return;
    this.svg.setPointerCapture(e.pointerId);
    this.group.focus({ preventScroll: true });
    e.preventDefault();
  }

  private pointerMove(e: PointerEvent): void {
    if (!this.drag || !this.band) return;
    const p = this.toFrame(e);
    const d = this.drag;
    let next: BandGeometry;
    if (d.kind === 'move') next = moveBand(d.band, p.x - d.from.x, p.y - d.from.y);
    else if (d.kind === 'edge') next = dragBandEdge(this.band, p);
    else next = dragBandEnd(this.band, d.kind, p);
    this.band = next;
    this.draw();
    this.onEdit(next, false);
  }

  private pointerUp(e: PointerEvent): void {
    if (!this.drag) return;
    this.drag = null;
    if (this.svg.hasPointerCapture(e.pointerId)) this.svg.releasePointerCapture(e.pointerId);
    if (this.band) this.onEdit(this.band, true);
  }

  private key(e: KeyboardEvent): void {
    if (!this.band) return;
    const big = e.shiftKey;
    const step = big ? 10 : 1;
    let b = this.band;
    switch (e.key) {
      case 'ArrowLeft':
        b = moveBand(b, -step, 0);
        break;
      case 'ArrowRight':
        b = moveBand(b, step, 0);
        break;
      case 'ArrowUp':
        b = moveBand(b, 0, -step);
        break;
      case 'ArrowDown':
        b = moveBand(b, 0, step);
        break;
      case '[':
      case '{':
        b = rotateBand(b, big ? -2 : -0.2);
        break;
      case ']':
      case '}':
        b = rotateBand(b, big ? 2 : 0.2);
        break;
      case ',':
      case '<':
        b = resizeBand(b, -2 * step, 0);
        break;
      case '.':
      case '>':
        b = resizeBand(b, 2 * step, 0);
        break;
      case '-':
      case '_':
        b = resizeBand(b, 0, -step);
        break;
      case '+':
      case '=':
        b = resizeBand(b, 0, step);
        break;
      default:
        return;
    }
    e.preventDefault();
    this.band = b;
    this.draw();
    this.onEdit(b, true);
  }
}

function el<K extends keyof SVGElementTagNameMap>(tag: K, attrs: Record<string, string>): SVGElementTagNameMap[K] {
  const node = document.createElementNS(NS, tag);
  for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, v);
  return node;
}

function setAttrs(node: Element, attrs: Record<string, number>): void {
  for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, v.toFixed(1));
}

/** Band geometry as a short read-out. */
export function describeBand(b: BandGeometry): string {
  return `centre (${b.center.x.toFixed(0)}, ${b.center.y.toFixed(0)}) px · angle ${b.angleDeg.toFixed(2)}° · slant ${b.slantDeg.toFixed(2)}° · length ${b.lengthPx.toFixed(0)} px · height ${b.heightPx.toFixed(0)} px`;
}
