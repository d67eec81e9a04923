/**
 * Dose result → sheet document: the mapping of `computeDose` (src/dosing) onto the
 * sheet model. Every figure printed is a figure of the result (the `rounded` text of a
 * Reported value, or a potential to the millivolt); nothing is computed here.
 */
import type { DoseRequest, DoseResult } from '../dosing/index.js';
import {
  autoRich,
  buildSheetDocument,
  displayTime,
  f,
  rich,
  t,
  type Block,
  type FlagItem,
  type KeyValueRow,
  type PageSize,
  type Person,
  type Rich,
  type Section,
  type SheetDocument,
  type TableCell,
} from './model.js';
import { MEMORY_MARK, safetyBoxFromCautions, sourceLabeller } from './safety.js';

export interface DoseSheetInput {
  readonly id: string;
  /** The request as sent (the readings are printed with the units the operator used). */
  readonly request: DoseRequest;
  readonly result: DoseResult;
  /** ISO 8601 time of sampling. */
  readonly sampledAt: string;
  /** ISO 8601 time the sheet is issued (becomes the PDF's CreationDate). */
  readonly issuedAt: string;
  readonly preparedBy: Person;
  readonly samplingPoint?: string;
  readonly sampleLabel?: string;
  /** Plant name when the result has no plant profile. */
  readonly plantName?: string;
  /** Id of the sheet this one corrects. */
  readonly supersedes?: string;
  /** Why the sheet named in supersedes is corrected (stored with the record). */
  readonly correctionReason?: string;
  readonly pageSize?: PageSize;
  /**
   * Add the result's traceability table (every derived figure with how it was found) and
   * the full citations; default false: the sheet lists each source by id, author, year and
   * title, and the archived result keeps the full trace.
   */
  readonly traceability?: boolean;
  /** The archive's content hash to print in the footer (the document's own is then not computed). */
  readonly contentSha256?: string;
}

/** "Author (Year). Title. Publisher…" → "Author (Year). Title." */
export function citationHead(citation: string): string {
  const m = /^(.+?\((?:\d{4}[a-z]?|n\.d\.)\)\.\s+.+?\.)(?:\s|$)/.exec(citation);
  return m ? m[1]! : citation;
}

const READING_LABELS: Readonly<Record<string, { label: Rich; basis: Rich }>> = {
  iron: { label: 'Iron(II), dissolved', basis: 'as Fe' },
  manganese: { label: 'Manganese(II), dissolved', basis: 'as Mn' },
  sulfide: { label: 'Sulfide', basis: 'as S' },
  arsenite: { label: 'Arsenic(III)', basis: 'as As' },
  nitrite: { label: 'Nitrite', basis: 'as N' },
  ammoniaN: { label: 'Ammonia', basis: 'as N' },
  alkalinity: { label: 'Alkalinity, total', basis: rich('as {CaCO3}') },
  tds: { label: 'Total dissolved solids', basis: '–' },
  bromide: { label: rich('Bromide, {Br-}'), basis: 'as Br' },
  toc: { label: 'Total organic carbon', basis: 'as C' },
  dissolvedOxygen: { label: rich('Dissolved oxygen, {O2}'), basis: rich('as {O2}') },
};

function reportedText(r: { rounded: string; unit: string } | null | undefined, suffix = ''): string {
  return r ? `${r.rounded} ${r.unit}${suffix}` : '–';
}

/** A reported figure with its unit, formulas in the unit typeset ("mg/L as CaCO3"). */
function qty(r: { rounded: string; unit: string } | null | undefined, suffix = ''): Rich {
  return r ? autoRich(`${r.rounded} ${r.unit}${suffix}`) : '–';
}

/** Several figures joined by " · ", missing ones left out. */
function qtys(...rs: ({ rounded: string; unit: string } | null | undefined)[]): Rich {
  const present = rs.filter((r): r is { rounded: string; unit: string } => !!r);
  return present.length ? autoRich(present.map((r) => `${r.rounded} ${r.unit}`).join('  ·  ')) : '–';
}

/** "sideEffects.alkalinityConsumed" → "side effects: alkalinity consumed". */
function humanKey(key: string): string {
  return key
    .split('.')
    .map((p) => p.replace(/([a-z])([A-Z])/g, '$1 $2').toLowerCase())
    .join(': ');
}

type Fig = { rounded: string; unit: string };

/**
 * Two figures of one quantity in the units the result prefers (`result.units.preferred`, the
 * request's `options.units` or the plant profile's preferredUnits) first and the other in
 * brackets: "20.9 kg/d (46.2 lb/d)" for SI, "46.2 lb/d (20.9 kg/d)" for US. A figure the result
 * does not carry in the other system is printed alone.
 */
function inPreferred(us: boolean, si: Fig | null | undefined, usFig: Fig | null | undefined, suffix = ''): string {
  const [a, b] = us ? [usFig, si] : [si, usFig];
  if (!a) return b ? `${b.rounded} ${b.unit}${suffix}` : '–';
  return `${a.rounded} ${a.unit}${suffix}${b ? ` (${b.rounded} ${b.unit})` : ''}`;
}

function mV(v: number): string {
  return (Math.round(v * 1000) / 1000).toFixed(3).replace('-', '−');
}

/** Basis "as KMnO4" → runs with the formula typeset. */
function basisRuns(basis: string): Rich {
  const m = /^as (.+)$/.exec(basis.trim());
  return m ? [t('as '), f(m[1]!)] : basis;
}

/** The sample temperature, in the preferred units first: "14 °C (57.2 °F)" or "57.2 °F (14 °C)". */
function temperatureText(result: DoseResult): string {
  const c = `${round1(result.conditions.temperatureC)} °C`;
  const f = `${round1(result.conditions.temperatureF)} °F`;
  return result.units.preferred === 'US' ? `${f} (${c})` : `${c} (${f})`;
}

function readingsTable(req: DoseRequest, result: DoseResult): Block {
  const s = req.sample as Record<string, unknown> & DoseRequest['sample'];
  const rows: TableCell[][] = [];
  rows.push(['pH', String(s.pH), '–', '–']);
  const tC = result.conditions.temperatureC;
  const us = result.units.preferred === 'US';
  // the reading as given, its conversion beside the unit (the Basis column is for "as Fe" and the like)
  const inC = `${round1(tC)} °C`;
  const inF = `${round1(result.conditions.temperatureF)} °F`;
  if (s.temperature) {
    const u = s.temperature.unit;
    const other = u === '°C' || u === 'C' ? inF : u === '°F' || u === 'F' ? inC : us ? `${inF}, ${inC}` : `${inC}, ${inF}`;
    rows.push(['Temperature', String(s.temperature.value), `${s.temperature.unit} (= ${other})`, '–']);
  } else rows.push(['Temperature', String(s.temperatureC ?? tC), `°C (= ${inF})`, '–']);
  for (const [field, labels] of Object.entries(READING_LABELS)) {
    const v = s[field] as { value: number; unit: string } | undefined;
    if (!v) continue;
    const demand = result.demand.find((d) => d.field === field);
    rows.push([demand ? demand.name : labels.label, String(v.value), v.unit, demand ? basisRuns(demand.reportedAs) : labels.basis]);
  }
  return {
    kind: 'table',
    columns: [{ header: 'Reading' }, { header: 'Value', align: 'right' }, { header: 'Unit' }, { header: 'Basis' }],
    rows,
  };
}

function round1(x: number): string {
  return (Math.round(x * 10) / 10).toString();
}

function flagItems(flags: DoseResult['flags'], label: (id: string) => string): FlagItem[] {
  return flags.map((fl) => ({
    severity: fl.severity,
    code: fl.code,
    message: autoRich(fl.message),
    ...(fl.source ? { source: label(fl.source) } : {}),
  }));
}

/** The sheet document of a computed dose. */
export function doseSheetDocument(input: DoseSheetInput): SheetDocument {
  const { result: r, request: req } = input;
  const label = sourceLabeller(r.sources);
  const ox = r.oxidant;
  const plantName = r.plant?.name ?? input.plantName ?? 'Plant not named';
  const sampleLabel = input.sampleLabel ?? 'Water sample';
  const doseText = `${r.dose.rounded} ${r.dose.unit}`;
  // the units the sheet leads with: the request's options.units (or the plant profile's preferredUnits)
  const us = r.units.preferred === 'US';

  // 1 result
  const resultRows: KeyValueRow[] = [
    { label: 'Total dose', value: [{ text: doseText, style: 'bold' }, t(' '), ...toArray(basisRuns(r.dose.basis))], source: 'the sum of the terms in section 3' },
  ];
  if (r.feed) {
    resultRows.push({ label: 'Feed, mass', value: autoRich(inPreferred(us, r.feed.massRate, r.feed.massRateUS, ` ${r.feed.massRate.basis}`)) });
    if (r.feed.solutionRate) {
      const rate = us
        ? inPreferred(true, r.feed.solutionRate, r.feed.solutionRateGalPerD)
        : `${reportedText(r.feed.solutionRate)}${r.feed.solutionRateGalPerD ? `, ${reportedText(r.feed.solutionRateGalPerD)}` : ''}`;
      resultRows.push({ label: 'Feed, solution', value: autoRich(`${rate}${r.feed.strength ? ` of ${r.feed.strength.text}` : ''}`) });
    }
    if (r.feed.pump) resultRows.push({ label: 'Pump setting', value: `${r.feed.pump.settingPercent.rounded} % of ${reportedText(r.feed.pump.ratedCapacity)}${r.feed.pump.id ? ` (${r.feed.pump.id})` : ''}` });
  }
  const nameOf = (id: string): string => r.demand.find((d) => d.contaminant === id)?.name ?? id;
  const contactWorst = r.contact.entries.find((e) => e.tooSlow) ?? r.contact.entries[0];
  if (contactWorst) {
    resultRows.push({
      label: 'Contact time',
      // the first-page row names the contaminant the check is about (the slowest, or the only one)
      value: autoRich(
        `${r.contact.availableMinutes !== null ? `${round1(r.contact.availableMinutes)} min available (${r.contact.availableFrom}). ` : ''}${nameOf(contactWorst.contaminant)}: ${contactWorst.message}${r.contact.entries.length > 1 ? ` Each contaminant in section 5.` : ''}`,
      ),
    });
  }
  // a correction always says why, or that no reason was recorded (a reader of the paper copy must see it)
  if (input.supersedes) resultRows.push({ label: 'Reason for correction', value: input.correctionReason ?? `not recorded: this sheet replaces ${input.supersedes} without a stated reason` });
  const resultBlocks: Block[] = [{ kind: 'keyValue', rows: resultRows }];
  const danger = r.flags.filter((fl) => fl.severity === 'danger');
  if (danger.length > 0) resultBlocks.push({ kind: 'flags', items: flagItems(danger, label) });

  // 3 reactions and demand
  const reactionBlocks: Block[] = r.demand.map((d, i) => ({
    kind: 'equation' as const,
    equation: d.reaction,
    label: `(${i + 1})`,
    caption: autoRich(`${d.name} to ${d.product.formula}, ${d.electrons} e- transferred, ${d.medium === 'base' ? 'basic' : 'acidic'} medium. ${d.product.why}`),
  }));
  const termRows: TableCell[][] = r.terms.map((term) => {
    const d = term.term === 'contaminant' ? r.demand.find((x) => x.contaminant === term.id) : undefined;
    return [
      d ? `${d.name}, reaction (${r.demand.indexOf(d) + 1})` : autoRich(term.label),
      d ? d.concentration.rounded : '–',
      d ? d.ratioRounded : '–',
      term.value.rounded,
      d ? `${d.ratioKind === 'stoichiometric' ? 'from the balanced reaction' : 'practical ratio'}; ${label(d.source)}` : autoRich(term.reason),
    ];
  });
  termRows.push([[{ text: 'Total', style: 'bold' }], '', '', [{ text: r.dose.rounded, style: 'bold' }], '']);
  reactionBlocks.push({
    kind: 'table',
    caption: rich(`Dose terms, mg/L as {${ox.basis.replace(/^as /, '')}}`),
    columns: [
      { header: 'Term' },
      { header: 'Concentration', unit: 'mg/L' },
      { header: 'Ratio', unit: 'mg/mg' },
      { header: 'Demand', unit: 'mg/L' },
      { header: 'Ratio and source' },
    ],
    rows: termRows,
    notes: [
      ...r.demand.map((d, i) => autoRich(`Ratio (${i + 1}): ${d.ratioRounded} ${d.ratioUnit}.`)),
      `Rounded once, at presentation: ${r.rounding.rule} (${r.rounding.significantFigures}).`,
    ],
  });

  // 4 feasibility
  const feasBlocks: Block[] = [];
  if (r.feasibility.length > 0) {
    const first = r.feasibility[0]!;
    feasBlocks.push({
      kind: 'equation',
      equation: first.oxidantCouple.halfReaction,
      label: `E = ${mV(first.oxidantCouple.potentialV)} V`,
      caption: `Oxidant couple: E° ${mV(first.oxidantCouple.standardPotentialV)} V (${first.oxidantCouple.usedValue}), at ${temperatureText(r)} and pH ${r.conditions.pH}.`,
    });
    for (const fe of r.feasibility) {
      feasBlocks.push({
        kind: 'equation',
        equation: fe.contaminantCouple.halfReaction,
        label: `E = ${mV(fe.contaminantCouple.potentialV)} V`,
        caption: `${nameOf(fe.contaminant)} couple: E° ${mV(fe.contaminantCouple.standardPotentialV)} V (${fe.contaminantCouple.usedValue}).`,
      });
    }
    feasBlocks.push({
      kind: 'table',
      columns: [
        { header: 'Contaminant' },
        { header: 'E cell', unit: 'V', align: 'right' },
        { header: 'E° cell (25 °C)', unit: 'V', align: 'right' },
        { header: 'ΔG', unit: 'kJ/mol', align: 'right' },
        { header: 'Feasible' },
        { header: 'Feasible at pH', align: 'right' },
      ],
      rows: r.feasibility.map((fe) => [
        nameOf(fe.contaminant),
        mV(fe.cellPotentialV),
        mV(fe.standardCellPotentialV),
        (Math.round(fe.deltaGkJPerMol * 10) / 10).toFixed(1).replace('-', '−'),
        fe.feasible ? 'yes' : 'no',
        // the side of the limit where E > 0, so the figure is not read as an upper limit
        fe.feasibilityLimitPH === null
          ? fe.feasibleSide === 'everywhere' ? '0–14' : fe.feasibleSide === 'nowhere' ? 'none' : '–'
          : `${fe.feasibleSide === 'below' ? '<' : '>'} ${(Math.round(fe.feasibilityLimitPH * 100) / 100).toFixed(2)}`,
      ]),
      notes: [
        autoRich(
          `Nernst at pH ${r.conditions.pH} and ${temperatureText(r)}; ${r.conditions.mediumReason}. ${r.conditions.ionicStrengthMolPerL > 0 ? `Ionic strength ${r.conditions.ionicStrengthMolPerL.toPrecision(2)} mol/L: ${r.conditions.ionicStrengthFrom}` : 'Ionic strength not known (no TDS given): activity coefficients taken as 1'}. Potentials to 1 mV. ` +
            `E° cell is for the reactions as written (with ${r.conditions.medium === 'base' ? 'OH-' : 'H+'} in this medium), so it changes where the medium changes at pH 7; compare E, not E°, between samples.`,
        ),
      ],
    });
  } else {
    feasBlocks.push({ kind: 'paragraph', text: 'No contaminant couple was evaluated (no contaminant reading, or a zero dose).' });
  }

  // 5 contact time
  const contactBlocks: Block[] = r.contact.entries.length
    ? [
        {
          kind: 'table',
          columns: [{ header: 'Contaminant' }, { header: 'Needed', unit: 'min', align: 'right' }, { header: 'Available', unit: 'min', align: 'right' }, { header: 'Status' }, { header: 'Basis' }],
          rows: r.contact.entries.map((e) => [
            nameOf(e.contaminant),
            e.requiredMinutes !== null
              ? round1(e.requiredMinutes)
              : e.requiredRange
                ? e.requiredRange.maxMinutes === null
                  ? `≥ ${round1(e.requiredRange.minMinutes)}`
                  : `${round1(e.requiredRange.minMinutes)}–${round1(e.requiredRange.maxMinutes)}`
                : '–',
            e.availableMinutes === null ? '–' : round1(e.availableMinutes),
            e.status,
            `${e.basis}${e.source ? `; ${label(e.source)}` : ''}`,
          ]),
        },
        ...r.contact.entries.filter((e) => e.remedy).map((e) => ({ kind: 'note' as const, tone: 'warning' as const, text: autoRich(`${nameOf(e.contaminant)}: ${e.remedy}`) })),
      ]
    : [{ kind: 'paragraph', text: 'No contact time check: no contaminant needs one.' }];

  // 6 side effects
  const fx = r.sideEffects;
  const fxRows: KeyValueRow[] = [
    { label: 'Alkalinity consumed', value: qty(fx.alkalinityConsumed) },
    {
      label: 'pH after dosing',
      value: autoRich(fx.pH.after === null ? `not estimated (${fx.pH.method})` : `${(Math.round(fx.pH.after * 100) / 100).toFixed(2)} (from ${fx.pH.before}). ${fx.pH.method}`),
    },
    { label: 'Solids formed', value: fx.solids.length ? autoRich(`${fx.solids.map((x) => `${x.amount.rounded} ${x.amount.unit}`).join('; ')}${fx.solids.length > 1 ? `; total ${reportedText(fx.solidsTotal)}` : ''}`) : 'none' },
  ];
  for (const bp of fx.byproducts) {
    fxRows.push({
      label: `By-product: ${bp.id}`,
      value: autoRich(`${bp.estimate ? `${reportedText(bp.estimate)}; ` : ''}${bp.text}${bp.limit ? ` (limit ${bp.limit.value}, ${bp.limit.citation})` : ''}`),
      source: label(bp.source),
    });
  }
  const fxBlocks: Block[] = [{ kind: 'keyValue', rows: fxRows }];
  for (const e of fx.excessOxidant) fxBlocks.push({ kind: 'note', tone: 'warning', text: autoRich(e) });
  for (const n of fx.notes) fxBlocks.push({ kind: 'note', text: autoRich(n) });

  // 7 feed
  const feedBlocks: Block[] = [];
  if (r.feed) {
    const fd = r.feed;
    const rows: KeyValueRow[] = us
      ? [
          { label: 'Mass rate', value: autoRich(inPreferred(true, fd.massRate, fd.massRateUS, ` ${fd.massRateUS.basis}`)), source: 'dose × flow' },
          { label: 'Pounds formula', value: `with 8.34: ${reportedText(fd.poundsFormula.conventionalLbPerD)}`, source: autoRich(fd.poundsFormula.note) },
        ]
      : [
          { label: 'Mass rate', value: autoRich(`${reportedText(fd.massRate)} ${fd.massRate.basis}`), source: 'dose × flow' },
          { label: 'Mass rate, US', value: `${reportedText(fd.massRateUS)}; pounds formula with 8.34: ${reportedText(fd.poundsFormula.conventionalLbPerD)}`, source: autoRich(fd.poundsFormula.note) },
        ];
    // the compound fed differs from the dose basis (NaOCl for a dose as Cl2); when it is the basis itself
    // (KMnO4 as KMnO4, O3 as O3) the row would only repeat the mass rate
    if (fd.compoundMassRate.formula !== r.dose.basis.replace(/^as /, '')) {
      rows.push({ label: 'Compound fed', value: autoRich(`${reportedText(fd.compoundMassRate)} ${fd.compoundMassRate.formula}`), source: autoRich(fd.compoundMassRate.derivation) });
    }
    if (fd.productMassRate) rows.push({ label: 'Product as supplied', value: autoRich(`${reportedText(fd.productMassRate)} ${fd.productMassRate.what}`) });
    if (fd.strength) rows.push({ label: 'Strength', value: autoRich(fd.strength.text) });
    if (fd.solutionRate) rows.push({ label: 'Solution rate', value: us ? qtys(fd.solutionRateGalPerD, fd.solutionRate, fd.solutionRateMLPerMin) : qtys(fd.solutionRate, fd.solutionRateMLPerMin, fd.solutionRateGalPerD) });
    if (fd.pump) rows.push({ label: 'Pump', value: `${fd.pump.id ?? 'pump'}: ${fd.pump.settingPercent.rounded} % of ${reportedText(fd.pump.ratedCapacity)}` });
    if (fd.dailyUse.volume || fd.dailyUse.mass) {
      rows.push({
        label: 'Daily use',
        value: us
          ? autoRich([fd.dailyUse.volume || fd.dailyUse.volumeUS ? inPreferred(true, fd.dailyUse.volume, fd.dailyUse.volumeUS) : null, fd.dailyUse.mass || fd.dailyUse.massUS ? inPreferred(true, fd.dailyUse.mass, fd.dailyUse.massUS) : null].filter(Boolean).join('  ·  '))
          : qtys(fd.dailyUse.volume, fd.dailyUse.volumeUS, fd.dailyUse.mass, fd.dailyUse.massUS),
      });
    }
    if (fd.daysOfSupply) rows.push({ label: 'Stock lasts', value: qty(fd.daysOfSupply) });
    if (fd.batch) {
      rows.push({
        label: 'Batch',
        value: `${inPreferred(us, fd.batch.productKg, fd.batch.productLb)} in ${reportedText(fd.batch.volume)}; ${fd.batch.gramsPer100gWater.rounded} g per 100 g water${fd.batch.solubilityGPer100gWater ? ` (solubility ${fd.batch.solubilityGPer100gWater.rounded} at ${fd.batch.temperatureC} °C)` : ''}${fd.batch.lastsDays ? `; lasts ${reportedText(fd.batch.lastsDays)}` : ''}`,
      });
    }
    if (fd.generator) rows.push({ label: fd.generator.label, value: `${reportedText(fd.generator.output)} (${reportedText(fd.generator.outputGPerH)}); ${fd.generator.note}` });
    feedBlocks.push({ kind: 'keyValue', rows });
    for (const n of fd.notes) feedBlocks.push({ kind: 'note', text: autoRich(n) });
  } else {
    feedBlocks.push({ kind: 'paragraph', text: 'No feed settings: the request gave no flow.' });
  }

  // 8 flags, 9 traceability and sources
  const flagBlocks: Block[] = [{ kind: 'flags', items: flagItems(r.flags, label), emptyText: 'No flags.' }];
  for (const n of r.notes) flagBlocks.push({ kind: 'paragraph', text: autoRich(n) });
  const traceBlocks: Block[] = [];
  if (input.traceability) {
    traceBlocks.push({
      kind: 'table',
      columns: [{ header: 'Quantity' }, { header: 'Value' }, { header: 'How' }, { header: 'Sources' }],
      rows: r.traceability.map((tr) => [humanKey(tr.quantity), autoRich(tr.value), autoRich(tr.how), tr.sources.map((id) => (id === 'input' ? 'request' : id)).join(', ')]),
      notes: ['Sources by id; the citations follow.'],
    });
  }
  traceBlocks.push({
    kind: 'table',
    ...(input.traceability ? { caption: 'Sources' } : {}),
    columns: [{ header: 'Id', width: 1.3 }, { header: 'Citation', width: 3.4 }],
    // the short citation keeps the mark of a source recalled from memory
    rows: r.sources.map((x) => [x.id, autoRich(input.traceability ? x.citation : x.citation.includes(MEMORY_MARK) ? `${citationHead(x.citation)} ${MEMORY_MARK}` : citationHead(x.citation))]),
  });

  const sections: Section[] = [
    { heading: 'Result', blocks: resultBlocks },
    { heading: 'Sample and readings', blocks: [readingsTable(req, r)] },
    { heading: 'Reactions and demand', blocks: reactionBlocks },
    { heading: 'Feasibility at the sample conditions', blocks: feasBlocks },
    { heading: 'Contact time', blocks: contactBlocks },
    { heading: 'Side effects', blocks: fxBlocks },
    { heading: 'Feed settings', blocks: feedBlocks },
    { heading: 'Flags', blocks: flagBlocks },
    { heading: input.traceability ? 'How the numbers were found' : 'Sources', blocks: traceBlocks },
  ];

  const flow = r.units.flow;
  const meta = [
    { label: 'Plant', value: plantName },
    { label: 'Sample', value: input.samplingPoint ? `${sampleLabel}, ${input.samplingPoint}` : sampleLabel },
    { label: 'Sampled at', value: displayTime(input.sampledAt) },
    { label: 'Oxidant', value: [t(`${ox.name} (`), f(ox.productFormula), t(')')] },
    { label: 'Flow', value: flow ? (us ? `${flow.us.rounded} MGD (${flow.si.rounded} m³/d)` : `${flow.si.rounded} m³/d (${flow.us.rounded} MGD)`) : 'not given' },
    { label: 'pH / temperature', value: `${r.conditions.pH} / ${temperatureText(r)}` },
    { label: 'Dose basis', value: [t('mg/L '), ...(toArray(basisRuns(r.dose.basis)))] },
    ...(input.supersedes ? [{ label: 'Supersedes', value: input.supersedes }] : []),
  ];

  return buildSheetDocument({
    ...(input.contentSha256 !== undefined ? { contentSha256: input.contentSha256 } : {}),
    id: input.id,
    kind: 'dose',
    title: `${ox.name} dose`,
    subtitle: `${plantName}; ${input.samplingPoint ?? sampleLabel}; sampled ${displayTime(input.sampledAt)}`,
    pageSize: input.pageSize ?? 'A4',
    issuedAt: input.issuedAt,
    meta,
    sections,
    safety: safetyBoxFromCautions({
      productName: ox.name,
      productDescription: `${ox.name}, ${ox.productFormula}; dose ${r.dose.basis}. Read the product's safety data sheet before handling.`,
      cautions: r.cautionDetails,
      sources: r.sources,
    }),
    signature: { preparedBy: input.preparedBy, preparedAt: input.issuedAt },
  });
}

function toArray(r: Rich): { text: string; formula?: boolean }[] {
  return typeof r === 'string' ? [{ text: r }] : [...r];
}
