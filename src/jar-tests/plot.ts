/**
 * The residual plot of a jar-test evaluation: residual oxidant against applied dose,
 * one series per contact time, the fitted line and its zero-residual crossing.
 *
 * `residualPlotData` is a neutral chart description in data units (axes with ticks,
 * series, lines, markers, legend) that any renderer can draw as vector graphics (the
 * PDF sheet draws it with its own page scale); `residualPlotSvg` draws that description
 * as a standalone SVG document.
 */
import { roundSig } from '../core/decimal.js';
import { fmt, isNegligible, mgPerLScale } from './common.js';
import type { JarTestEvaluation } from './evaluate.js';

export type MarkerShape = 'circle' | 'square' | 'triangle' | 'diamond';

export interface PlotTick {
  readonly value: number;
  readonly label: string;
}

export interface PlotAxis {
  readonly label: string;
  readonly unit: string;
  readonly min: number;
  readonly max: number;
  readonly ticks: readonly PlotTick[];
}

export interface PlotPoint {
  readonly x: number;
  readonly y: number;
  readonly jar: number;
  /** Drawn hollow: at or below the detection limit, not used in the fit. */
  readonly belowDetection: boolean;
  readonly usedInFit: boolean;
}

export interface PlotSeries {
  readonly id: string;
  readonly label: string;
  readonly contactTimeMin: number;
  readonly color: string;
  readonly marker: MarkerShape;
  readonly points: readonly PlotPoint[];
}

export interface PlotLine {
  readonly id: string;
  readonly label: string;
  readonly kind: 'fit' | 'detection-limit';
  readonly color: string;
  /** Dash pattern in points (null = solid). */
  readonly dash: readonly number[] | null;
  readonly from: { readonly x: number; readonly y: number };
  readonly to: { readonly x: number; readonly y: number };
}

export interface PlotMarker {
  readonly id: string;
  readonly kind: 'zero-crossing';
  readonly label: string;
  readonly x: number;
  readonly y: number;
  readonly color: string;
}

export interface ResidualPlotData {
  readonly title: string;
  readonly subtitle: string;
  readonly xAxis: PlotAxis;
  readonly yAxis: PlotAxis;
  readonly series: readonly PlotSeries[];
  readonly lines: readonly PlotLine[];
  readonly markers: readonly PlotMarker[];
  readonly legend: readonly { readonly label: string; readonly color: string; readonly marker?: MarkerShape; readonly dash?: readonly number[] | null; readonly kind: 'series' | 'line' | 'marker' }[];
}

const PALETTE = ['#1f5fa8', '#c0392b', '#2e8b57', '#7b4fa0', '#d9822b', '#5d6d7e'] as const;
const SHAPES: readonly MarkerShape[] = ['circle', 'square', 'triangle', 'diamond'];
const FIT_COLOR = '#222222';
const DL_COLOR = '#888888';
const CROSS_COLOR = '#000000';

/** Ticks at 1, 2 or 5 × 10^k from min to a max rounded up to a tick: the step whose interval count is nearest `target`. */
export function niceTicks(min: number, max: number, target = 5): { min: number; max: number; step: number; ticks: PlotTick[] } {
  if (!(max > min)) max = min + 1;
  const mag = 10 ** Math.floor(Math.log10((max - min) / target));
  const intervals = (step: number) => Math.ceil(max / step - 1e-9) - Math.floor(min / step + 1e-9);
  let step = mag;
  for (const k of [0.5, 1, 2, 5, 10, 20]) {
    const cand = k * mag;
    const better = Math.abs(intervals(cand) - target) < Math.abs(intervals(step) - target);
    const tieLarger = Math.abs(intervals(cand) - target) === Math.abs(intervals(step) - target) && cand > step;
    if (better || tieLarger) step = cand;
  }
  const lo = Math.floor(min / step + 1e-9) * step;
  const hi = Math.ceil(max / step - 1e-9) * step;
  const decimals = Math.max(0, -Math.floor(Math.log10(step) + 1e-9));
  const ticks: PlotTick[] = [];
  const count = Math.round((hi - lo) / step);
  for (let i = 0; i <= count; i++) {
    const v = Number((lo + i * step).toFixed(decimals));
    ticks.push({ value: v, label: v.toFixed(decimals) });
  }
  return { min: lo, max: hi, step, ticks };
}

/** Neutral chart description of the residual plot, in data units. */
export function residualPlotData(evaluation: JarTestEvaluation): ResidualPlotData {
  const basis = evaluation.basis;
  const fit = evaluation.fit;
  const used = new Set(fit?.jarsUsed ?? []);
  const series: PlotSeries[] = evaluation.demandCurves
    .filter((c) => c.points.length > 0)
    .map((c, i) => ({
      id: `t${c.contactTimeMin}`,
      label: `${fmt(c.contactTimeMin)} min`,
      contactTimeMin: c.contactTimeMin,
      color: PALETTE[i % PALETTE.length]!,
      marker: SHAPES[i % SHAPES.length]!,
      points: [...c.points]
        .sort((a, b) => a.doseMgPerL - b.doseMgPerL)
        .map((p) => ({ x: p.doseMgPerL, y: p.residualMgPerL, jar: p.jar, belowDetection: p.belowDetection, usedInFit: fit !== null && c.contactTimeMin === fit.contactTimeMin && used.has(p.jar) })),
    }));

  const apparent = evaluation.apparentDemand;
  // the size of the test's mg/L figures: an intercept or a standard error far below it is rounding noise (prints as 0)
  const scale = mgPerLScale(evaluation.estimateMgPerL, evaluation.jars.map((j) => ({ doseMgPerL: j.doseMgPerL, results: j.results })));
  const xs = [...evaluation.jars.map((j) => j.doseMgPerL), ...(apparent !== null && apparent.doseMgPerL > 0 ? [apparent.doseMgPerL] : [])];
  const ys = [...series.flatMap((s) => s.points.map((p) => p.y)), evaluation.detectionLimitMgPerL];
  const xt = niceTicks(0, Math.max(...xs) * 1.05);
  const yt = niceTicks(0, Math.max(...ys, 0) * 1.1 || 1);

  const lines: PlotLine[] = [];
  let fitLabel = 'no residual line: too few jars kept a measurable residual';
  if (fit !== null) {
    const m = fit.slope;
    const b = fit.intercept;
    const yAt = (x: number) => m * x + b;
    const xAt = (y: number) => (y - b) / m;
    const fitDoses = evaluation.jars.filter((j) => used.has(j.jar)).map((j) => j.doseMgPerL);
    let x1 = m > 0 ? Math.max(0, xAt(0)) : Math.min(...fitDoses);
    let x2 = m > 0 ? xt.max : Math.max(...fitDoses);
    if (m > 0 && yAt(x2) > yt.max) x2 = xAt(yt.max);
    if (m < 0 && yAt(x1) > yt.max) x1 = xAt(yt.max);
    if (m < 0 && yAt(x2) < 0) x2 = xAt(0);
    const slopeScale = Math.max(Math.abs(m), 1);
    fitLabel = `fit at ${fmt(fit.contactTimeMin)} min: residual = ${fmt(m, 3, slopeScale)} × dose ${b < 0 && !isNegligible(b, scale) ? '−' : '+'} ${fmt(Math.abs(b), 3, scale)} (r² = ${Number.isFinite(fit.r2) ? roundSig(fit.r2, 3) : 'n/a'}, n = ${fit.n})`;
    lines.push({ id: 'fit', label: fitLabel, kind: 'fit', color: FIT_COLOR, dash: null, from: { x: x1, y: yAt(x1) }, to: { x: x2, y: yAt(x2) } });
  }
  lines.push({
    id: 'detection-limit',
    label: `detection limit ${fmt(evaluation.detectionLimitMgPerL)} mg/L`,
    kind: 'detection-limit',
    color: DL_COLOR,
    dash: [2, 3],
    from: { x: 0, y: evaluation.detectionLimitMgPerL },
    to: { x: xt.max, y: evaluation.detectionLimitMgPerL },
  });

  const markers: PlotMarker[] = [];
  if (apparent !== null && apparent.doseMgPerL >= 0) {
    markers.push({
      id: 'apparent-demand',
      kind: 'zero-crossing',
      label: `apparent demand ${fmt(apparent.doseMgPerL, 3, scale)} ± ${fmt(apparent.stdError, 2, Math.max(Math.abs(apparent.doseMgPerL), scale))} mg/L (standard error)`,
      x: apparent.doseMgPerL,
      y: 0,
      color: CROSS_COLOR,
    });
  }

  const legend: ResidualPlotData['legend'] = [
    ...series.map((s) => ({ label: `residual at ${s.label}`, color: s.color, marker: s.marker, kind: 'series' as const })),
    ...(fit !== null ? [{ label: `fitted line (${fmt(fit.contactTimeMin)} min)`, color: FIT_COLOR, dash: null, kind: 'line' as const }] : []),
    { label: 'detection limit', color: DL_COLOR, dash: [2, 3], kind: 'line' as const },
    ...(markers.length > 0 ? [{ label: 'zero-residual crossing', color: CROSS_COLOR, kind: 'marker' as const }] : []),
  ];

  return {
    title: `Residual oxidant against applied dose (${evaluation.oxidant})`,
    subtitle: `${fitLabel}${apparent !== null ? `; apparent demand ${fmt(apparent.doseMgPerL, 3, scale)} mg/L as ${basis}` : '; no zero crossing'}`,
    xAxis: { label: `Applied dose (mg/L as ${basis})`, unit: 'mg/L', min: xt.min, max: xt.max, ticks: xt.ticks },
    yAxis: { label: `Residual oxidant (mg/L as ${basis})`, unit: 'mg/L', min: yt.min, max: yt.max, ticks: yt.ticks },
    series,
    lines,
    markers,
    legend,
  };
}

// ---------------------------------------------------------------------------
// SVG

function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&apos;');
}

const n2 = (v: number) => (Math.round(v * 100) / 100).toString();

function markerSvg(shape: MarkerShape, x: number, y: number, color: string, hollow: boolean, r = 4.5): string {
  const fill = hollow ? '#ffffff' : color;
  const common = `fill="${fill}" stroke="${color}" stroke-width="1.5"`;
  switch (shape) {
    case 'circle':
      return `<circle cx="${n2(x)}" cy="${n2(y)}" r="${r}" ${common}/>`;
    case 'square':
      return `<rect x="${n2(x - r)}" y="${n2(y - r)}" width="${2 * r}" height="${2 * r}" ${common}/>`;
    case 'triangle':
      return `<path d="M${n2(x)} ${n2(y - r * 1.15)} L${n2(x + r)} ${n2(y + r * 0.85)} L${n2(x - r)} ${n2(y + r * 0.85)} Z" ${common}/>`;
    case 'diamond':
      return `<path d="M${n2(x)} ${n2(y - r * 1.2)} L${n2(x + r)} ${n2(y)} L${n2(x)} ${n2(y + r * 1.2)} L${n2(x - r)} ${n2(y)} Z" ${common}/>`;
  }
}

/** A standalone SVG document (UTF-8 text) of the residual plot. */
export function residualPlotSvg(evaluation: JarTestEvaluation, options: { width?: number; height?: number } = {}): string {
  const data = residualPlotData(evaluation);
  const W = options.width ?? 720;
  const H = options.height ?? 440;
  const left = 70;
  const right = 230;
  const top = 52;
  const bottom = 58;
  const pw = W - left - right;
  const ph = H - top - bottom;
  const sx = (x: number) => left + ((x - data.xAxis.min) / (data.xAxis.max - data.xAxis.min)) * pw;
  const sy = (y: number) => top + ph - ((y - data.yAxis.min) / (data.yAxis.max - data.yAxis.min)) * ph;
  const out: string[] = [];
  out.push('<?xml version="1.0" encoding="UTF-8"?>');
  out.push(
    `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" font-family="DejaVu Sans, Verdana, sans-serif" font-size="12" role="img" aria-labelledby="plot-title">`,
  );
  out.push(`<title id="plot-title">${esc(data.title)}</title>`);
  out.push(`<desc>${esc(data.subtitle)}</desc>`);
  out.push(`<rect x="0" y="0" width="${W}" height="${H}" fill="#ffffff"/>`);
  out.push(`<text x="${left}" y="22" font-size="14" font-weight="bold">${esc(data.title)}</text>`);
  out.push(`<text x="${left}" y="40" font-size="10" fill="#444444">${esc(data.subtitle)}</text>`);

  // grid, ticks and tick labels
  out.push('<g class="grid" stroke="#e3e3e3" stroke-width="1">');
  for (const t of data.xAxis.ticks) out.push(`<line x1="${n2(sx(t.value))}" y1="${top}" x2="${n2(sx(t.value))}" y2="${top + ph}"/>`);
  for (const t of data.yAxis.ticks) out.push(`<line x1="${left}" y1="${n2(sy(t.value))}" x2="${left + pw}" y2="${n2(sy(t.value))}"/>`);
  out.push('</g>');
  out.push('<g class="axes" stroke="#000000" stroke-width="1">');
  out.push(`<line x1="${left}" y1="${top + ph}" x2="${left + pw}" y2="${top + ph}"/>`);
  out.push(`<line x1="${left}" y1="${top}" x2="${left}" y2="${top + ph}"/>`);
  for (const t of data.xAxis.ticks) out.push(`<line x1="${n2(sx(t.value))}" y1="${top + ph}" x2="${n2(sx(t.value))}" y2="${top + ph + 5}"/>`);
  for (const t of data.yAxis.ticks) out.push(`<line x1="${left - 5}" y1="${n2(sy(t.value))}" x2="${left}" y2="${n2(sy(t.value))}"/>`);
  out.push('</g>');
  out.push('<g class="tick-labels" font-size="11">');
  for (const t of data.xAxis.ticks) out.push(`<text x="${n2(sx(t.value))}" y="${top + ph + 18}" text-anchor="middle">${esc(t.label)}</text>`);
  for (const t of data.yAxis.ticks) out.push(`<text x="${left - 8}" y="${n2(sy(t.value) + 4)}" text-anchor="end">${esc(t.label)}</text>`);
  out.push('</g>');
  out.push(`<text class="x-label" x="${n2(left + pw / 2)}" y="${H - 14}" text-anchor="middle">${esc(data.xAxis.label)}</text>`);
  out.push(`<text class="y-label" x="${-(top + ph / 2)}" y="18" transform="rotate(-90)" text-anchor="middle">${esc(data.yAxis.label)}</text>`);

  // lines
  for (const l of data.lines) {
    const dash = l.dash !== null ? ` stroke-dasharray="${l.dash.join(' ')}"` : '';
    out.push(
      `<line class="${l.kind}" x1="${n2(sx(l.from.x))}" y1="${n2(sy(l.from.y))}" x2="${n2(sx(l.to.x))}" y2="${n2(sy(l.to.y))}" stroke="${l.color}" stroke-width="${l.kind === 'fit' ? 1.8 : 1}"${dash}><title>${esc(l.label)}</title></line>`,
    );
  }

  // series
  for (const s of data.series) {
    out.push(`<g class="series" id="series-${esc(s.id)}" data-contact-time-min="${s.contactTimeMin}">`);
    out.push(`<title>${esc(`residual at ${s.label}`)}</title>`);
    if (s.points.length > 1) {
      const pts = s.points.map((p) => `${n2(sx(p.x))},${n2(sy(p.y))}`).join(' ');
      out.push(`<polyline points="${pts}" fill="none" stroke="${s.color}" stroke-width="0.8" stroke-opacity="0.6"/>`);
    }
    for (const p of s.points) out.push(markerSvg(s.marker, sx(p.x), sy(p.y), s.color, p.belowDetection));
    out.push('</g>');
  }

  // zero crossing
  for (const mk of data.markers) {
    const x = sx(mk.x);
    const y = sy(mk.y);
    out.push(`<g class="zero-crossing" id="${esc(mk.id)}">`);
    out.push(`<line x1="${n2(x)}" y1="${top}" x2="${n2(x)}" y2="${top + ph}" stroke="${mk.color}" stroke-width="0.8" stroke-dasharray="5 3"/>`);
    out.push(`<path d="M${n2(x)} ${n2(y - 1)} L${n2(x + 6)} ${n2(y - 11)} L${n2(x - 6)} ${n2(y - 11)} Z" fill="${mk.color}"/>`);
    out.push(`<text x="${n2(x + 6)}" y="${n2(top + 14)}" font-size="11">${esc(mk.label)}</text>`);
    out.push('</g>');
  }

  // legend
  const lx = left + pw + 16;
  let ly = top + 8;
  out.push('<g class="legend" font-size="11">');
  for (const e of data.legend) {
    if (e.kind === 'series') out.push(markerSvg(e.marker ?? 'circle', lx + 10, ly, e.color, false, 4));
    else if (e.kind === 'line') {
      const dash = e.dash ? ` stroke-dasharray="${e.dash.join(' ')}"` : '';
      out.push(`<line x1="${lx}" y1="${ly}" x2="${lx + 20}" y2="${ly}" stroke="${e.color}" stroke-width="1.8"${dash}/>`);
    } else out.push(`<path d="M${lx + 10} ${ly + 5} L${lx + 16} ${ly - 5} L${lx + 4} ${ly - 5} Z" fill="${e.color}"/>`);
    out.push(`<text x="${lx + 28}" y="${ly + 4}">${esc(e.label)}</text>`);
    ly += 20;
  }
  out.push(`<text x="${lx}" y="${ly + 4}" font-size="10" fill="#444444">hollow: at or below detection limit</text>`);
  out.push('</g>');
  out.push('</svg>');
  return out.join('\n') + '\n';
}
