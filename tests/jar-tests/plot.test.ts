import { describe, expect, it } from 'vitest';
import { evaluateJarTest, type EvaluateJarTestInput } from '../../src/jar-tests/evaluate.js';
import { niceTicks, residualPlotData, residualPlotSvg } from '../../src/jar-tests/plot.js';

// Invented jar test: residual = max(0, dose − 1.8) at 30 min and max(0, dose − 1.5) at 5 min.
const INPUT: EvaluateJarTestInput = {
  oxidant: 'potassium-permanganate',
  basis: 'KMnO4',
  estimateMgPerL: 1.5,
  jarVolumeL: 2,
  jars: [1.0, 1.5, 2.0, 2.5, 3.0, 3.5].map((d) => ({
    doseMgPerL: d,
    results: [
      { contactTimeMin: 5, residualOxidantMgPerL: Math.max(0, Number((d - 1.5).toFixed(10))) },
      { contactTimeMin: 30, residualOxidantMgPerL: Math.max(0, Number((d - 1.8).toFixed(10))) },
    ],
  })),
};

interface Node {
  name: string;
  attrs: Record<string, string>;
  children: Node[];
  text: string;
}

/** A strict little XML reader for the test: every tag must close in order; returns the tree or throws. */
function parseXml(xml: string): Node {
  const re = /<\?[^?]*\?>|<!--[\s\S]*?-->|<(\/?)([A-Za-z][\w:.-]*)((?:\s+[\w:.-]+="[^"<]*")*)\s*(\/?)>|([^<]+)|(<)/g;
  const root: Node = { name: '#root', attrs: {}, children: [], text: '' };
  const stack: Node[] = [root];
  for (const m of xml.matchAll(re)) {
    if (m[6] !== undefined) throw new Error(`stray "<" at ${m.index}`);
    if (m[5] !== undefined) {
      if (/&(?!(amp|lt|gt|quot|apos|#\d+);)/.test(m[5])) throw new Error(`unescaped & in text at ${m.index}`);
      stack[stack.length - 1]!.text += m[5];
      continue;
    }
    if (m[2] === undefined) continue; // declaration or comment
    const [_, close, name, attrText, self] = m;
    if (close === '/') {
      const top = stack.pop()!;
      if (top.name !== name) throw new Error(`</${name}> closes <${top.name}> at ${m.index}`);
      continue;
    }
    const attrs: Record<string, string> = {};
    for (const a of attrText!.matchAll(/([\w:.-]+)="([^"]*)"/g)) {
      if (a[1]! in attrs) throw new Error(`duplicate attribute ${a[1]}`);
      attrs[a[1]!] = a[2]!;
    }
    const node: Node = { name: name!, attrs, children: [], text: '' };
    stack[stack.length - 1]!.children.push(node);
    if (self !== '/') stack.push(node);
  }
  if (stack.length !== 1) throw new Error(`unclosed <${stack[stack.length - 1]!.name}>`);
  if (root.children.length !== 1) throw new Error('more than one root element');
  return root.children[0]!;
}

function all(n: Node, pred: (n: Node) => boolean): Node[] {
  return [...(pred(n) ? [n] : []), ...n.children.flatMap((c) => all(c, pred))];
}
const textOf = (n: Node): string => n.text + n.children.map(textOf).join('');

describe('the test XML reader itself', () => {
  it.each([
    ['<a><b></a></b>', 'closes'],
    ['<a><b/>', 'unclosed'],
    ['<a>x & y</a>', 'unescaped'],
    ['<a x="1" x="2"/>', 'duplicate'],
  ])('rejects %s', (xml, why) => {
    expect(() => parseXml(xml)).toThrow(why);
  });
});

describe('niceTicks', () => {
  it.each([
    // the step of 1, 2 or 5 × 10^k whose number of intervals is nearest 5
    [0, 3.675, [0, 1, 2, 3, 4]], // 0.5 gives 8 intervals, 1 gives 4, 2 gives 2
    [0, 2.6, [0, 0.5, 1, 1.5, 2, 2.5, 3]], // 0.5 gives 6, 1 gives 3
    [0, 1.87, [0, 0.5, 1, 1.5, 2]],
    [0, 0.055, [0, 0.01, 0.02, 0.03, 0.04, 0.05, 0.06]],
    [0, 0, [0, 0.2, 0.4, 0.6, 0.8, 1]], // edge: empty range becomes 0 … 1
  ])('%s … %s → %j', (lo, hi, ticks) => {
    expect(niceTicks(lo, hi).ticks.map((t) => t.value)).toEqual(ticks);
  });
});

describe('residualPlotData', () => {
  const e = evaluateJarTest(INPUT);
  const d = residualPlotData(e);

  it('has one series per contact time, with every jar that has a residual', () => {
    expect(d.series.map((s) => s.contactTimeMin)).toEqual([5, 30]);
    expect(d.series.every((s) => s.points.length === 6)).toBe(true);
    // at 30 min jars 1, 2 (1.0, 1.5 mg/L) read 0: hollow, not in the fit
    const s30 = d.series[1]!;
    expect(s30.points.filter((p) => p.belowDetection).map((p) => p.jar)).toEqual([1, 2]);
    expect(s30.points.filter((p) => p.usedInFit).map((p) => p.jar)).toEqual([3, 4, 5, 6]);
    expect(d.series[0]!.points.some((p) => p.usedInFit)).toBe(false);
  });

  it('draws the fitted line from the zero-residual crossing, and marks the crossing', () => {
    const fit = d.lines.find((l) => l.kind === 'fit')!;
    expect(fit.from.x).toBeCloseTo(1.8, 10);
    expect(fit.from.y).toBeCloseTo(0, 10);
    expect(fit.to.y).toBeCloseTo(fit.to.x - 1.8, 10);
    expect(d.markers).toHaveLength(1);
    expect(d.markers[0]!.x).toBeCloseTo(1.8, 10);
    expect(d.markers[0]!.label).toContain('1.8');
  });

  it('labels the axes with units and basis, and the ticks span the data', () => {
    expect(d.xAxis.label).toBe('Applied dose (mg/L as KMnO4)');
    expect(d.yAxis.label).toBe('Residual oxidant (mg/L as KMnO4)');
    expect(d.xAxis.min).toBe(0);
    expect(d.xAxis.max).toBeGreaterThanOrEqual(3.5);
    expect(d.yAxis.max).toBeGreaterThanOrEqual(2.0); // 3.5 − 1.5 at 5 min
    expect(d.legend.map((l) => l.label)).toEqual(expect.arrayContaining(['residual at 5 min', 'residual at 30 min', 'detection limit']));
  });
});

describe('residualPlotSvg', () => {
  const e = evaluateJarTest(INPUT);
  const svg = residualPlotSvg(e);
  const root = parseXml(svg);

  it('is a well-formed standalone SVG document', () => {
    expect(svg.startsWith('<?xml version="1.0" encoding="UTF-8"?>')).toBe(true);
    expect(root.name).toBe('svg');
    expect(root.attrs.xmlns).toBe('http://www.w3.org/2000/svg');
    expect(root.attrs.viewBox).toBe('0 0 720 440');
  });

  it('contains both series with one marker per point, the fit line, the crossing and the legend', () => {
    const series = all(root, (n) => n.name === 'g' && n.attrs.class === 'series');
    expect(series.map((s) => s.attrs['data-contact-time-min'])).toEqual(['5', '30']);
    for (const s of series) {
      const markers = s.children.filter((c) => ['circle', 'rect', 'path'].includes(c.name));
      expect(markers).toHaveLength(6);
    }
    // hollow markers for the two readings at or below the detection limit at 30 min
    expect(series[1]!.children.filter((c) => c.attrs.fill === '#ffffff')).toHaveLength(2);
    expect(all(root, (n) => n.name === 'line' && n.attrs.class === 'fit')).toHaveLength(1);
    expect(all(root, (n) => n.attrs.class === 'zero-crossing')).toHaveLength(1);
    const legend = all(root, (n) => n.attrs.class === 'legend')[0]!;
    expect(textOf(legend)).toContain('residual at 30 min');
    expect(textOf(root)).toContain('Applied dose (mg/L as KMnO4)');
    expect(textOf(root)).toContain('apparent demand 1.8');
  });

  it('keeps every coordinate a finite number inside the canvas', () => {
    for (const n of all(root, () => true)) {
      for (const k of ['x', 'y', 'x1', 'y1', 'x2', 'y2', 'cx', 'cy']) {
        if (n.attrs[k] === undefined) continue;
        const v = Number(n.attrs[k]);
        expect(Number.isFinite(v), `${n.name} ${k}=${n.attrs[k]}`).toBe(true);
        if (n.attrs.transform === undefined) {
          expect(v).toBeGreaterThanOrEqual(0);
          expect(v).toBeLessThanOrEqual(720);
        }
      }
    }
  });

  it('escapes text (an oxidant id with & and <)', () => {
    const odd = residualPlotSvg(evaluateJarTest({ ...INPUT, oxidant: 'site <mix> & co' }));
    expect(() => parseXml(odd)).not.toThrow();
    expect(odd).toContain('site &lt;mix&gt; &amp; co');
  });

  it('still draws when the slope is not positive (no crossing)', () => {
    const jars = [2, 2.5, 3].map((d, i) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: 0.9 - 0.2 * i }] }));
    const s = residualPlotSvg(evaluateJarTest({ ...INPUT, jars }));
    const r = parseXml(s);
    expect(all(r, (n) => n.attrs.class === 'zero-crossing')).toHaveLength(0);
    expect(all(r, (n) => n.name === 'line' && n.attrs.class === 'fit')).toHaveLength(1);
  });
});

describe('residualPlotData: an exact fit prints no floating-point noise', () => {
  // residual = dose − 1.1 exactly: the least-squares standard errors are ~1e-16 (rounding noise),
  // ≤ 1e-9 of the test's mg/L scale, so they print as 0 (the rule of the PDF sheet, src/sheets/wording.ts).
  const exact = evaluateJarTest({
    oxidant: 'potassium-permanganate',
    basis: 'KMnO4',
    estimateMgPerL: 1.1,
    jarVolumeL: 2,
    jars: [1.3, 1.7, 2.1, 2.9, 3.3].map((d) => ({ doseMgPerL: d, results: [{ contactTimeMin: 30, residualOxidantMgPerL: Number((d - 1.1).toFixed(10)) }] })),
  });

  it('the standard error is noise, not zero, in the data', () => {
    expect(exact.apparentDemand!.stdError).toBeGreaterThan(0);
    expect(exact.apparentDemand!.stdError).toBeLessThan(1e-12);
  });

  it('the zero-crossing label reads "± 0 mg/L" and no text of the SVG has e-notation', () => {
    const data = residualPlotData(exact);
    expect(data.markers[0]!.label).toBe('apparent demand 1.1 ± 0 mg/L (standard error)');
    expect(data.subtitle).toContain('residual = 1 × dose − 1.1');
    const svg = residualPlotSvg(exact);
    const texts = [...svg.matchAll(/>([^<]+)</g)].map((m) => m[1]!);
    for (const t of texts) expect(t).not.toMatch(/\d[eE][+-]?\d/);
  });

  it('a real standard error is kept: noisy residuals print their ± as figures', () => {
    const noisy = evaluateJarTest({
      oxidant: 'potassium-permanganate',
      basis: 'KMnO4',
      estimateMgPerL: 1.1,
      jarVolumeL: 2,
      jars: [[1.3, 0.22], [1.7, 0.61], [2.1, 1.02], [2.9, 1.79], [3.3, 2.21]].map(([d, r]) => ({ doseMgPerL: d!, results: [{ contactTimeMin: 30, residualOxidantMgPerL: r! }] })),
    });
    const label = residualPlotData(noisy).markers[0]!.label;
    expect(label).toMatch(/± 0\.0\d+ mg\/L \(standard error\)$/);
  });
});
