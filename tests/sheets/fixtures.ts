/**
 * Sheet documents built by hand for the renderer and signing tests. The plant, the
 * people and every reading are invented demo data; the figures are worked by hand
 * (shown beside them) only so that the page reads like a real sheet; the tests check
 * rendering and signing, not the chemistry.
 */
import {
  buildSheetDocument,
  f,
  rich,
  t,
  type SafetyBox,
  type SheetDocument,
  type PageSize,
} from '../../src/sheets/model.js';

export const PERMANGANATE_SAFETY: SafetyBox = {
  heading: 'Safety: potassium permanganate',
  product: 'Potassium permanganate, technical grade, fed as a 2 % solution (invented demo product)',
  hazards: [
    'Strong oxidiser: may intensify fire; keep away from combustibles.',
    'Harmful if swallowed; dust and solution damage eyes and skin.',
  ],
  incompatibilities: [
    'Reducing agents, organic matter, glycerol, ethylene glycol.',
    rich('Concentrated acids ({H2SO4}, {HCl}): violent reaction, chlorine from {HCl}.'),
    'Peroxides and powdered metals.',
  ],
  ppe: ['Chemical goggles and face shield when mixing.', 'Nitrile gloves, apron, dust mask (P2) for the solid.'],
  overdoseSigns: [
    'Pink or purple water leaving the filters.',
    rich('Brown or black deposits ({MnO2}) downstream; manganese above target.'),
  ],
  sources: ['product safety data sheet (demo)', 'AWWA B603 (permanganates), common practice'],
};

export function doseSheet(options: { pageSize?: PageSize; id?: string } = {}): SheetDocument {
  return buildSheetDocument({
    id: options.id ?? 'DS-DEMO-0001',
    kind: 'dose',
    title: 'Permanganate dose for iron and manganese removal',
    subtitle: 'Demo Water Works (invented), raw water after aeration; well blend 2',
    pageSize: options.pageSize ?? 'A4',
    issuedAt: '2025-03-14T09:05:00Z',
    meta: [
      { label: 'Plant', value: 'Demo Water Works (invented)' },
      { label: 'Sample', value: 'Raw water, well blend 2' },
      { label: 'Sampled at', value: '2025-03-14 08:30 (UTC+01:00)' },
      { label: 'Sampling point', value: 'SP-02 aerator outlet' },
      { label: 'Oxidant', value: rich('Potassium permanganate ({KMnO4})') },
      { label: 'Flow', value: '4 000 m³/d (1.06 MGD)' },
      { label: 'pH / temperature', value: '7.2 / 11.5 °C' },
      { label: 'Dose basis', value: rich('mg/L as {KMnO4}') },
    ],
    sections: [
      {
        heading: 'Result',
        blocks: [
          {
            kind: 'keyValue',
            rows: [
              { label: 'Total dose', value: rich('**2.0 mg/L** as {KMnO4}'), source: 'sum of the demand terms below' },
              { label: 'Product feed', value: rich('8.0 kg/d {KMnO4} (17.6 lb/d)') },
              { label: 'Solution feed rate', value: '16.7 L/h of 20 g/L solution (4.41 gal/h)' },
              { label: 'Contact time available', value: '12 min at design flow (target ≥ 5 min)' },
            ],
          },
          {
            kind: 'paragraph',
            text: [
              t('The dose covers the stoichiometric demand of dissolved iron(II) and manganese(II), oxidised to '),
              f('Fe(OH)3(s)'),
              t(' and '),
              f('MnO2(s)'),
              t(', plus a background demand for organic matter taken from the last jar test. '),
              t('Permanganate itself is reduced to '),
              f('MnO2(s)'),
              t(' at this pH, so no '),
              f('Mn2+'),
              t(' is added to the water when the dose matches the demand.'),
            ],
          },
        ],
      },
      {
        heading: 'Readings',
        blocks: [
          {
            kind: 'table',
            columns: [
              { header: 'Reading' },
              { header: 'Value', unit: 'as measured' },
              { header: 'Unit' },
              { header: 'Basis' },
              { header: 'Method' },
            ],
            rows: [
              ['Iron(II), dissolved', '1.20', 'mg/L', 'as Fe', 'phenanthroline, field kit'],
              ['Manganese(II), dissolved', '0.35', 'mg/L', 'as Mn', 'PAN, field kit'],
              ['pH', '7.2', '–', '–', 'electrode'],
              ['Temperature', '11.5', '°C', '–', 'electrode'],
              ['Alkalinity', '180', 'mg/L', rich('as {CaCO3}'), 'titration'],
              [rich('Dissolved oxygen, {O2}'), '2.1', 'mg/L', rich('as {O2}'), 'optical probe'],
            ],
          },
        ],
      },
      {
        heading: 'Reactions and demand',
        blocks: [
          { kind: 'equation', equation: '3Fe2+ + MnO4- + 7H2O = 3Fe(OH)3(s) + MnO2(s) + 5H+', label: '(1)', caption: 'Iron(II) oxidised by permanganate, near-neutral water' },
          { kind: 'equation', equation: '3Mn2+ + 2MnO4- + 2H2O = 5MnO2(s) + 4H+', label: '(2)', caption: 'Manganese(II) oxidised by permanganate' },
          { kind: 'equation', equation: 'MnO4- + 4H+ + 3e- = MnO2(s) + 2H2O', label: '(3)', caption: 'Permanganate half-reaction, E° = 1.70 V (value printed in the tables)' },
          {
            kind: 'table',
            caption: 'Demand terms',
            columns: [
              { header: 'Term' },
              { header: 'Concentration', unit: 'mg/L' },
              { header: 'Ratio', unit: 'mg/mg' },
              { header: 'Demand', unit: 'mg/L' },
              { header: 'Source' },
            ],
            rows: [
              [rich('Iron(II), reaction (1)'), '1.20', '0.943', '1.13', 'balanced reaction; EPA 1999 gives 0.94'],
              [rich('Manganese(II), reaction (2)'), '0.35', '1.92', '0.672', 'balanced reaction; EPA 1999 gives 1.92'],
              ['Background (organic matter)', '–', '–', '0.20', 'jar test JT-DEMO-0003'],
              [rich('**Total**'), '', '', rich('**2.00**'), ''],
            ],
            notes: ['Figures rounded to 3 significant figures, round half to even, at presentation.'],
          },
        ],
      },
      {
        heading: 'Feasibility at the sample conditions',
        blocks: [
          {
            kind: 'table',
            columns: [
              { header: 'Couple' },
              { header: 'E°', unit: 'V' },
              { header: 'E at pH 7.2, 11.5 °C', unit: 'V' },
              { header: 'Cell E', unit: 'V' },
              { header: 'Feasible' },
            ],
            rows: [
              [[f('MnO4-'), t(' / '), f('MnO2(s)')], '1.70', '1.13', '–', '–'],
              [[f('Fe(OH)3(s)'), t(' / '), f('Fe2+')], '0.96', '0.08', '1.05', 'yes'],
              [[f('MnO2(s)'), t(' / '), f('Mn2+')], '1.224', '0.59', '0.54', 'yes'],
            ],
            notes: [rich('Nernst slope 2.303RT/F = 0.0564 V at 11.5 °C, from CODATA 2018 R and F. Activities of {Fe2+} and {Mn2+} from the readings (Davies).')],
          },
          {
            kind: 'flags',
            items: [
              { severity: 'danger', code: 'OVERDOSE_PINK_WATER', message: 'A dose above the demand passes permanganate to the filters: pink water at the tap. Start at the computed dose and raise in small steps.', source: 'EPA 1999 Alternative Disinfectants and Oxidants Guidance Manual, ch. 5' },
              { severity: 'warning', code: 'MANGANESE_SECONDARY_LIMIT', message: rich('Manganese must end below 0.05 mg/L as Mn; a residual of {MnO4-} above 0.02 mg/L colours the water.'), source: '40 CFR 143.3 (secondary standard)' },
              { severity: 'info', code: 'CONTACT_TIME_OK', message: 'Contact time 12 min meets the 5 min target for iron and manganese.', source: 'common practice' },
            ],
          },
          { kind: 'note', text: 'The background demand is a site value from the last jar test; repeat the jar test when the raw water changes.', tone: 'info' },
        ],
      },
    ],
    safety: PERMANGANATE_SAFETY,
    signature: {
      preparedBy: { name: 'A. Operator (demo)', role: 'Shift operator' },
      preparedAt: '2025-03-14T09:05:00Z',
      signedBy: {
        name: 'B. Engineer (demo)',
        role: 'Process engineer',
        organisation: 'Demo Water Works (invented)',
        certificateSubject: 'CN=B. Engineer (demo) (DEMO — NOT FOR REGULATORY USE), O=Demo Water Works (invented)',
      },
      signedAt: '2025-03-14T09:06:00Z',
    },
  });
}

export function jarTestEvaluationSheet(): SheetDocument {
  const doses = [1.0, 1.5, 2.0, 2.5, 3.0, 3.5];
  // invented results: residual = 0.9 × (dose − 1.8) above the apparent demand of 1.8 mg/L
  const residual5 = [0, 0, 0.12, 0.55, 1.02, 1.44];
  const residual30 = [0, 0, 0.05, 0.41, 0.86, 1.30];
  return buildSheetDocument({
    id: 'JT-DEMO-0003',
    kind: 'jar-test-evaluation',
    title: 'Jar test evaluation: permanganate demand',
    subtitle: 'Demo Water Works (invented), raw water after aeration',
    pageSize: 'A4',
    issuedAt: '2025-03-10T15:40:00Z',
    meta: [
      { label: 'Plant', value: 'Demo Water Works (invented)' },
      { label: 'Sample', value: 'Raw water, well blend 2' },
      { label: 'Sampled at', value: '2025-03-10 09:10 UTC' },
      { label: 'Jars', value: '6 × 2.0 L' },
    ],
    sections: [
      {
        heading: 'Result',
        blocks: [
          {
            kind: 'keyValue',
            columns: 2,
            rows: [
              { label: 'Apparent demand', value: rich('**1.83 mg/L** as {KMnO4}') },
              { label: 'Background demand', value: '0.03 mg/L' },
              { label: 'Lowest dose meeting targets', value: '2.5 mg/L at 30 min' },
              { label: 'Recommended plant dose', value: rich('**2.2 mg/L** as {KMnO4}') },
            ],
          },
        ],
      },
      {
        heading: 'Residuals against dose',
        blocks: [
          {
            kind: 'chart',
            title: 'Residual permanganate against applied dose',
            xAxis: { label: 'Applied dose', unit: 'mg/L as KMnO₄' },
            yAxis: { label: 'Residual', unit: 'mg/L' },
            series: [
              { name: 'Residual after 5 min', points: doses.map((x, i) => ({ x, y: residual5[i]! })) },
              { name: 'Residual after 30 min', points: doses.map((x, i) => ({ x, y: residual30[i]! })) },
            ],
            fit: { label: 'Fit, 30 min: residual = 0.842 × dose − 1.54 (r² = 0.998)', slope: 0.842, intercept: -1.54, xFrom: 1.83, xTo: 3.5 },
            guides: [{ axis: 'y', value: 0.05, label: 'target residual 0.05 mg/L' }],
            caption: 'Fit over the jars that kept a measurable residual; the apparent demand is where the line crosses zero residual.',
          },
          {
            kind: 'table',
            columns: [
              { header: 'Jar' },
              { header: 'Dose', unit: 'mg/L' },
              { header: 'Residual 5 min', unit: 'mg/L' },
              { header: 'Residual 30 min', unit: 'mg/L' },
              { header: 'Fe, filtered', unit: 'mg/L' },
              { header: 'Mn, filtered', unit: 'mg/L' },
              { header: 'Notes' },
            ],
            rows: doses.map((d, i) => [String(i + 1), d.toFixed(1), residual5[i]!.toFixed(2), residual30[i]!.toFixed(2), i < 2 ? '0.42' : '0.03', i < 2 ? '0.21' : '0.02', i > 3 ? 'pink tint' : '']),
          },
        ],
      },
    ],
    safety: PERMANGANATE_SAFETY,
    safetyPosition: 'end',
    signature: {
      preparedBy: { name: 'B. Engineer (demo)', role: 'Process engineer' },
      preparedAt: '2025-03-10T15:40:00Z',
    },
  });
}
