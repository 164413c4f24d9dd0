import * as d3 from 'd3';

/**
 * The frame every glowprint plot is drawn in: an SVG with margins, linear scales, axes, labels and a title. Core code
 * receives a `Document` (the browser's, or one made by src/io/svgDocument on Node) so that the same drawing code
 * serves the web app, the CLI's --svg files and the reports.
 */
export interface ChartOptions {
  document: Document;
  /** @default 720 */
  widthPx?: number;
  /** @default 360 */
  heightPx?: number;
  title?: string;
  xLabel: string;
  yLabel: string;
  xDomain: [number, number];
  yDomain: [number, number];
}

export interface Chart {
  svg: d3.Selection<SVGSVGElement, unknown, null, undefined>;
  /** The plotting area, translated to the inner origin. */
  plot: d3.Selection<SVGGElement, unknown, null, undefined>;
  x: d3.ScaleLinear<number, number>;
  y: d3.ScaleLinear<number, number>;
  innerWidthPx: number;
  innerHeightPx: number;
}

export const CHART_DEFAULTS = { widthPx: 720, heightPx: 360 } as const;

/** The project's own plot colours (series, markers, annotations). */
export const PALETTE = {
  ink: '#1f2430',
  grid: '#d9dce3',
  series: ['#2b6cb0', '#c05621', '#2f855a', '#6b46c1', '#b83280'],
  marker: '#c53030',
  muted: '#718096',
  channelR: '#d94848',
  channelG: '#3c9a4b',
  channelB: '#3f63c9',
} as const;

/** The margins around the plotting area (px): room for the title, the axes and their labels. */
function chartMarginsPx(hasTitle: boolean): { top: number; right: number; bottom: number; left: number } {
  return { top: hasTitle ? 34 : 14, right: 18, bottom: 44, left: 64 };
}

/** The plotting area's size (px) of a chart of these options, known before it is drawn. */
export function chartInnerSizePx(options: Pick<ChartOptions, 'widthPx' | 'heightPx' | 'title'>): { widthPx: number; heightPx: number } {
  const margin = chartMarginsPx(Boolean(options.title));
  return {
    widthPx: (options.widthPx ?? CHART_DEFAULTS.widthPx) - margin.left - margin.right,
    heightPx: (options.heightPx ?? CHART_DEFAULTS.heightPx) - margin.top - margin.bottom,
  };
}

export function createChart(options: ChartOptions): Chart {
  const widthPx = options.widthPx ?? CHART_DEFAULTS.widthPx;
  const heightPx = options.heightPx ?? CHART_DEFAULTS.heightPx;
  const margin = chartMarginsPx(Boolean(options.title));
  const { widthPx: innerWidthPx, heightPx: innerHeightPx } = chartInnerSizePx(options);
  const svgNode = options.document.createElementNS('http://www.w3.org/2000/svg', 'svg') as SVGSVGElement;
  const svg = d3
    .select(svgNode)
    .attr('xmlns', 'http://www.w3.org/2000/svg')
    .attr('width', widthPx)
    .attr('height', heightPx)
    .attr('viewBox', `0 0 ${widthPx} ${heightPx}`)
    .attr('font-family', 'system-ui, sans-serif')
    .attr('font-size', 11);
  svg.append('rect').attr('width', widthPx).attr('height', heightPx).attr('fill', '#ffffff');
  const x = d3.scaleLinear().domain(options.xDomain).range([0, innerWidthPx]);
  const y = d3.scaleLinear().domain(options.yDomain).range([innerHeightPx, 0]);
  const plot = svg.append('g').attr('transform', `translate(${margin.left},${margin.top})`);
  plot
    .append('g')
    .attr('class', 'grid')
    .attr('stroke', PALETTE.grid)
    .selectAll('line')
    .data(y.ticks(6))
    .join('line')
    .attr('x1', 0)
    .attr('x2', innerWidthPx)
    .attr('y1', (d) => y(d))
    .attr('y2', (d) => y(d));
  plot.append('g').attr('class', 'axis-x').attr('transform', `translate(0,${innerHeightPx})`).call(d3.axisBottom(x).ticks(8));
  plot.append('g').attr('class', 'axis-y').call(d3.axisLeft(y).ticks(6));
  plot
    .append('text')
    .attr('x', innerWidthPx / 2)
    .attr('y', innerHeightPx + 36)
    .attr('text-anchor', 'middle')
    .attr('fill', PALETTE.ink)
    .text(options.xLabel);
  plot
    .append('text')
    .attr('transform', `translate(${-48},${innerHeightPx / 2}) rotate(-90)`)
    .attr('text-anchor', 'middle')
    .attr('fill', PALETTE.ink)
    .text(options.yLabel);
  if (options.title) {
    svg
      .append('text')
      .attr('x', margin.left)
      .attr('y', 20)
      .attr('font-size', 13)
      .attr('font-weight', 600)
      .attr('fill', PALETTE.ink)
      .text(options.title);
  }
  return { svg, plot, x, y, innerWidthPx, innerHeightPx };
}

/** Serialises a chart as a standalone SVG file's text. */
export function chartToSvgText(chart: Chart): string {
  return '<?xml version="1.0" encoding="UTF-8"?>\n' + (chart.svg.node() as SVGSVGElement).outerHTML + '\n';
}
